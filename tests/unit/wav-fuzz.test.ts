// The WAV header parser under 20,000 seeded mutations of valid files: every
// input is accepted or refused with the reader's own error, none takes
// longer than 100 ms. Longer runs: `npm run fuzz -- N [seed]`.
import { describe, expect, it } from "vitest";
import { fuzzWavReader } from "../fuzz/wav-mutator.ts";

describe("WAV reader fuzz", () => {
  it("survives 20,000 mutated headers: no crash, none over 100 ms", async () => {
    const report = await fuzzWavReader(20261203, 20_000);
    expect(report.crashes).toEqual([]);
    expect(report.inputs).toBe(20_000);
    // The mutations reach both sides: some inputs still parse, most are refused for many reasons.
    expect(report.accepted).toBeGreaterThan(100);
    expect(Object.keys(report.refused).length).toBeGreaterThanOrEqual(6);
    expect(report.refused["header-too-long"]).toBeGreaterThan(0);
    expect(report.slowestMs).toBeLessThan(100);
  });
});

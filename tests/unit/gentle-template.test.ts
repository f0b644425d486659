// The "Gentle master" template is gentle on real material, not only by its
// numbers: on each synthesized demo mix, every multiband band stays under about
// 2 dB of gain reduction (common practice: gentle multiband ratios, aiming under
// about 2 dB per band) and the bus compressor works in the light range.
// The 10 ms trace holds each slot's largest reduction, so the 90th percentile
// of the active slots is the "typical" figure and the maximum is a transient's.
import { mkdtempSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { DEMO_MIXES, synthesizeDemoMix } from "../../db/seeds/03_demo_audio.ts";
import { parseChain } from "../../dsp/chain/schema.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { renderFile } from "../../dsp/render/render-file.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-gentle-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const parsed = parseChain(JSON.parse(readFileSync(new URL("../../examples/gentle-master.json", import.meta.url), "utf8")));
if (!parsed.ok) throw new Error("examples/gentle-master.json is not a valid chain");
const chain = parsed.chain;

function p90(values: number[]): number {
  const active = values.filter((v) => v > 0.01).sort((a, b) => a - b);
  return active.length === 0 ? 0 : active[Math.floor(0.9 * (active.length - 1))];
}

describe("Gentle master on the demo mixes", () => {
  for (const [title, spec] of Object.entries(DEMO_MIXES)) {
    it(`${title}: each band under about 2 dB, the bus compressor light`, async () => {
      const [left, right] = synthesizeDemoMix(spec);
      const input = join(dir, `${spec.seed}.wav`);
      const writer = await createWavWriter(input, { sampleRate: 48_000, channels: 2, bitDepth: 24, float: false });
      await writer.write([left, right], left.length);
      await writer.close();
      const result = await renderFile(input, join(dir, `${spec.seed}-out.wav`), chain, {});
      const multiband = result.traces.stages.find((s) => s.type === "multiband")!;
      expect(multiband.gainReductionDb).toHaveLength(4);
      for (const [b, trace] of multiband.gainReductionDb.entries()) {
        expect(p90(trace), `band ${b + 1} typical`).toBeLessThanOrEqual(2);
        expect(Math.max(...trace), `band ${b + 1} peak`).toBeLessThanOrEqual(3);
      }
      const bus = result.traces.stages.find((s) => s.type === "compress")!.gainReductionDb[0];
      expect(p90(bus)).toBeGreaterThan(0.3); // it does work…
      expect(Math.max(...bus)).toBeLessThanOrEqual(4); // …at most the ~4 dB of gentle bus compression (common practice)
      expect(result.output.truePeakDbtp).toBeLessThanOrEqual(-1 + 0.1);
    });
  }
});

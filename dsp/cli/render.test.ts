import { spawnSync } from "node:child_process";
import { existsSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { readWav, synthMix, tempDir, writeWav } from "../render/render.test-util.ts";

const ROOT = join(import.meta.dirname, "..", "..");
const hasSox = spawnSync("sox", ["--version"]).status === 0;
// Through the dispatcher when part 1's main.ts is there, else this command alone.
const entry = existsSync(join(ROOT, "dsp/cli/main.ts")) ? ["dsp/cli/main.ts", "render"] : ["dsp/cli/render.ts"];

function tidemark(args: string[]) {
  return spawnSync(process.execPath, ["--import", "tsx", ...entry, ...args], { cwd: ROOT, encoding: "utf8", timeout: 120_000 });
}

describe("tidemark render (end to end)", () => {
  const dir = tempDir();

  it(`renders ${hasSox ? "a sox-made" : "a writer-made"} file with the example chain, prints JSON, writes traces`, async () => {
    const input = join(dir, "in.wav");
    if (hasSox) {
      const r = spawnSync("sox", ["-n", "-r", "48000", "-c", "2", "-b", "24", input, "synth", "4", "sine", "110", "sine", "1500", "gain", "-10"]);
      expect(r.status).toBe(0);
    } else await writeWav(input, synthMix(4, 48000, 3), 48000, 24, false);
    const out = join(dir, "out.wav");
    const traces = join(dir, "traces.json");
    const r = tidemark([input, "--chain", join(ROOT, "examples/gentle-master.json"), "--out", out, "--traces", traces, "--target", "-14"]);
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(Math.abs(report.output.integratedLufs + 14)).toBeLessThanOrEqual(0.1);
    expect(report.output.truePeakDbtp).toBeLessThanOrEqual(-1);
    expect(report.input.sampleRate).toBe(48000);
    expect(report.passes).toBeGreaterThanOrEqual(1);
    const t = JSON.parse(readFileSync(traces, "utf8"));
    expect(t.gridMs).toBe(10);
    expect(t.stages.map((s: { type: string }) => s.type)).toEqual(["compress", "multiband", "limit"]);
    const [l] = await readWav(out);
    expect(l.length).toBe(4 * 48000);
  });

  it("exits 2 and names the stage and field for a bad chain", () => {
    const bad = join(dir, "bad.json");
    writeFileSync(bad, JSON.stringify({ stages: [{ type: "trim", gainDb: 0 }, { type: "compress", thresholdDb: -20, ratio: 0.5, kneeDb: 6, attackMs: 10, releaseMs: 100, makeupDb: 0, rmsWindowMs: 20 }] }));
    const r = tidemark([join(dir, "in.wav"), "--chain", bad, "--out", join(dir, "x.wav")]);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain("stages[1] (compress).ratio: must be at least 1");
    expect(existsSync(join(dir, "x.wav"))).toBe(false);
  });

  it("exits 2 for a missing or non-WAV input, 1 for bad arguments", () => {
    const chain = join(ROOT, "examples/gentle-master.json");
    expect(tidemark([join(dir, "nope.wav"), "--chain", chain, "--out", join(dir, "y.wav")]).status).toBe(2);
    const junk = join(dir, "junk.wav");
    writeFileSync(junk, "not a wave file at all, just text");
    const r = tidemark([junk, "--chain", chain, "--out", join(dir, "y.wav")]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/junk\.wav/);
    expect(tidemark([junk, "--chain", chain]).status).toBe(1);
    const region = tidemark([junk, "--chain", chain, "--out", "z.wav", "--region", "5:2"]);
    expect(region.status).toBe(1);
    expect(region.stderr).toContain("--region must be START:END");
  });
});

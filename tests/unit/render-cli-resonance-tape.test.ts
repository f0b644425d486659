// `tidemark render` runs a chain with both the tape and the resonance stage
// (the "Warm and even" template) on a file made by sox: pink noise with a
// steady 3150 Hz tone, the narrowest resonance there is. The print comes out
// at the input's length (latency compensated), the traces hold both stages,
// and the resonance stage cuts the tone up to its 3 dB limit.
import { spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { CHAIN_TEMPLATES } from "../../app/lib/chain-templates.ts";
import { readWav, tempDir } from "../../dsp/render/render.test-util.ts";

const ROOT = join(import.meta.dirname, "..", "..");
const hasSox = spawnSync("sox", ["--version"]).status === 0;

describe("tidemark render with the resonance and tape stages", () => {
  const dir = tempDir();

  it.skipIf(!hasSox)("renders a sox-made file through a chain with both stages", async () => {
    const input = join(dir, "in.wav");
    const made = spawnSync("sox", ["-n", "-r", "48000", "-c", "2", "-b", "24", input, "synth", "6", "pinknoise", "synth", "sine", "mix", "3150", "gain", "-12"]);
    expect(made.status).toBe(0);
    const chainPath = join(dir, "warm.json");
    writeFileSync(chainPath, JSON.stringify(CHAIN_TEMPLATES.find((t) => t.name === "Warm and even")!.params));
    const out = join(dir, "out.wav");
    const traces = join(dir, "traces.json");
    const r = spawnSync(process.execPath, ["--import", "tsx", "dsp/cli/main.ts", "render", input, "--chain", chainPath, "--out", out, "--traces", traces], { cwd: ROOT, encoding: "utf8", timeout: 120_000 });
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(report.output.truePeakDbtp).toBeLessThanOrEqual(-1 + 0.1);
    const t = JSON.parse(readFileSync(traces, "utf8"));
    const types = t.stages.map((s: { type: string }) => s.type);
    expect(types).toEqual(expect.arrayContaining(["tape", "resonance"]));
    const cut = t.stages.find((s: { type: string }) => s.type === "resonance").gainReductionDb[0] as number[];
    expect(Math.max(...cut)).toBeGreaterThan(2);
    expect(Math.max(...cut)).toBeLessThanOrEqual(3 + 1e-9);
    const [left, right] = await readWav(out);
    expect(left.length).toBe(6 * 48000);
    expect(right.length).toBe(6 * 48000);
  });
});

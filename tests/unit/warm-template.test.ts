// The "Warm and even" template holds both new stages, gently set, and is
// gentle on the synthesized demo mixes, not only by its numbers: the
// resonance stage's deepest cut never passes its 3 dB limit and is typically
// well under it (it shaves build-ups, it does not re-equalise the mix), and
// the tape curve is hit lightly (under 1 dB of compression at each step's
// peak, typically; a light drive, common practice for a final master).
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { CHAIN_TEMPLATES } from "../../app/lib/chain-templates.ts";
import { DEMO_MIXES, synthesizeDemoMix } from "../../db/seeds/03_demo_audio.ts";
import { printRefusal } from "../../dsp/chain/print-check.ts";
import { parseChain } from "../../dsp/chain/schema.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { renderFile } from "../../dsp/render/render-file.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-warm-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const template = CHAIN_TEMPLATES.find((t) => t.name === "Warm and even")!;
const parsed = parseChain(template.params);
if (!parsed.ok) throw new Error("the Warm and even template is not a valid chain");
const chain = parsed.chain;

function p90(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(0.9 * (sorted.length - 1))];
}

describe("Warm and even template", () => {
  it("holds a tape and a resonance stage, gently set, and may be printed", () => {
    const tape = chain.stages.find((s) => s.type === "tape");
    const resonance = chain.stages.find((s) => s.type === "resonance");
    if (tape?.type !== "tape" || resonance?.type !== "resonance") throw new Error("both stages expected");
    expect(tape.driveDb).toBeLessThanOrEqual(6);
    expect(tape.bumpDb).toBeLessThanOrEqual(2);
    expect(resonance.maxCutDb).toBeLessThanOrEqual(4);
    expect(resonance.listen).toBe("output");
    expect(printRefusal(chain)).toBeNull();
    expect(new Set(CHAIN_TEMPLATES.map((t) => t.name)).size).toBe(CHAIN_TEMPLATES.length);
  });

  const [title, spec] = Object.entries(DEMO_MIXES)[0];
  it(`${title}: the deepest cut stays within 3 dB, the tape curve is hit lightly`, async () => {
    const [left, right] = synthesizeDemoMix(spec);
    const input = join(dir, `${spec.seed}.wav`);
    const writer = await createWavWriter(input, { sampleRate: 48_000, channels: 2, bitDepth: 24, float: false });
    await writer.write([left, right], left.length);
    await writer.close();
    const result = await renderFile(input, join(dir, `${spec.seed}-out.wav`), chain, {});
    const cut = result.traces.stages.find((s) => s.type === "resonance")!.gainReductionDb[0];
    const curve = result.traces.stages.find((s) => s.type === "tape")!.gainReductionDb[0];
    expect(Math.max(...cut)).toBeLessThanOrEqual(3 + 1e-9);
    expect(p90(cut)).toBeLessThan(3);
    expect(p90(curve)).toBeLessThan(1);
    expect(result.output.truePeakDbtp).toBeLessThanOrEqual(-1 + 0.1);
  });
});

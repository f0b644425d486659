// Previews are the print: a pre-rolled region with the print's loudness gain
// has the print's samples over that region. The reference is our own whole-
// file render (the print); the bound −100 dB relative to the print's peak is
// the issue's, the pre-roll's reasoning is in preroll.ts.
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { parseChain, type Chain, type ChainInput } from "../chain/schema.ts";
import { PREROLL_S, prerollAlignFrames, prerollStartFrame } from "./preroll.ts";
import { renderFile } from "./render-file.ts";
import { readWav, synthMix, tempDir, writeWav } from "./render.test-util.ts";

const FS = 48000;

function chain(input: ChainInput): Chain {
  const r = parseChain(input);
  if (!r.ok) throw new Error(JSON.stringify(r.errors));
  return r.chain;
}

// A mastering chain with the slowest memory the schema allows in the bus compressor (auto release: 2.5 s slow envelope).
const RECIPE: ChainInput = {
  stages: [
    { type: "eq", bands: [{ shape: "highPass", freqHz: 25, gainDb: 0, q: 0.707 }, { shape: "highShelf", freqHz: 9000, gainDb: 1, q: 0.7, channel: "side" }] },
    { type: "saturate", driveDb: 4, blend: 0.3, oversample: 2 },
    { type: "compress", thresholdDb: -30, ratio: 3, kneeDb: 6, attackMs: 30, releaseMs: "auto", makeupDb: 0, rmsWindowMs: 20, sidechainHighPassHz: 90 },
    { type: "multiband", crossoversHz: [120, 1000, 4000], bands: [0, 1, 2, 3].map(() => ({ thresholdDb: -32, ratio: 1.5, kneeDb: 6, attackMs: 20, releaseMs: 400, makeupDb: 0, rmsWindowMs: 20 })) },
    { type: "limit", inputGainDb: 2, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 100, truePeak: true },
  ],
  output: { bitDepth: 24, dither: "tpdf", targetLufs: -11 },
};

/** 0–45 s a quiet intro (−40 dB, with one louder swell at 20–24 s), 45–70 s a loud chorus (−12 dB). */
function introAndChorus(): Float64Array[] {
  const quiet = synthMix(70, FS, 3, -40), loud = synthMix(70, FS, 4, -12);
  return quiet.map((q, c) =>
    q.map((v, i) => {
      const t = i / FS;
      const swell = t >= 20 && t < 24 ? 10 ** (15 / 20) : 1;
      const chorus = Math.min(1, Math.max(0, (t - 45) / 0.05));
      return v * swell * (1 - chorus) + loud[c][i] * chorus;
    }),
  );
}

describe("previews are the print", () => {
  const dir = tempDir();

  it("pre-roll rule: at least PREROLL_S before the region, on frames aligned to 100 ms and 256, cut at the file's start", () => {
    for (const fs of [44100, 48000, 96000]) {
      const align = prerollAlignFrames(fs);
      expect(align % Math.round(fs / 10)).toBe(0);
      expect(align % 256).toBe(0);
      for (const startS of [0, 12.34, 61.5, 200]) {
        const region = Math.round(startS * fs);
        const p = prerollStartFrame(region, fs);
        expect(p % align).toBe(0);
        expect(p === 0 || region - p >= PREROLL_S * fs).toBe(true);
        expect(region - p).toBeLessThan(PREROLL_S * fs + align);
      }
    }
  });

  it("a 22 s preview of the chorus (after a quiet intro) has the print's gain and samples: difference below −100 dB re the print's peak; a second preview does not search", async () => {
    const input = join(dir, "intro-chorus.wav");
    await writeWav(input, introAndChorus(), FS, 24, false);
    const recipe = chain(RECIPE);
    const print = await renderFile(input, join(dir, "print.wav"), recipe);
    const region = { startS: 46.5, endS: 68.5 };
    // The pre-roll starts inside the intro (not at the file's start), so the test exercises the rule, not a whole-prefix render.
    expect(prerollStartFrame(Math.round(region.startS * FS), FS)).toBeGreaterThan(0);
    const preview = await renderFile(input, join(dir, "preview.wav"), recipe, { region });
    expect(preview.targetGainDb).toBe(print.targetGainDb);
    expect(preview.passes).toBe(print.passes + 1);
    const again = await renderFile(input, join(dir, "preview2.wav"), recipe, { region, targetGainDb: preview.targetGainDb });
    expect(again.passes).toBe(1);

    const p = await readWav(join(dir, "print.wav"));
    const v = await readWav(join(dir, "preview.wav"));
    const v2 = await readWav(join(dir, "preview2.wav"));
    const start = Math.round(region.startS * FS), n = Math.round(region.endS * FS) - start;
    expect(v[0].length).toBe(n);
    let peak = 0, diff = 0, diff2 = 0;
    for (let c = 0; c < 2; c++) {
      for (let i = 0; i < n; i++) {
        peak = Math.max(peak, Math.abs(p[c][start + i]));
        diff = Math.max(diff, Math.abs(p[c][start + i] - v[c][i]));
        diff2 = Math.max(diff2, Math.abs(v[c][i] - v2[c][i]));
      }
    }
    expect(peak).toBeGreaterThan(0.5);
    expect(diff === 0 || 20 * Math.log10(diff / peak) < -100).toBe(true);
    expect(diff2).toBe(0);
    // The meters were pre-rolled: the short-term curve of the preview is the print's over the region (no ramp from silence).
    const grid = start / (FS / 100);
    const printCurve = print.traces.shortTermLufs.slice(grid, grid + 50);
    const previewCurve = preview.traces.shortTermLufs.slice(0, 50);
    for (let k = 0; k < 50; k++) expect(Math.abs(previewCurve[k] - printCurve[k])).toBeLessThan(0.01);
  }, 240_000);
});

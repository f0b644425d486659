// The render loop against its own contract (issue #4): determinism, block-size
// independence, latency compensation (an impulse stays at its frame: analytic),
// the bypass null (bit-exact for float, within 1 LSB at 24 bits with TPDF:
// analytic bound of the dither), and loudness targeting, measured with our
// ITU-R BS.1770-4 meter (itself checked against EBU Tech 3341 in dsp/loudness).
import { readFileSync, readdirSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { parseChain, type Chain, type ChainInput } from "../chain/schema.ts";
import { LoudnessMeter } from "../loudness/meter.ts";
import { renderFile } from "./render-file.ts";
import { readWav, synthMix, tempDir, writeWav } from "./render.test-util.ts";
import { Oversampler } from "../saturate/oversampler.ts";

const FS = 48000;

function chain(input: ChainInput): Chain {
  const r = parseChain(input);
  if (!r.ok) throw new Error(JSON.stringify(r.errors));
  return r.chain;
}

const FULL: ChainInput = {
  stages: [
    { type: "trim", gainDb: 1 },
    { type: "eq", bands: [{ shape: "peak", freqHz: 3000, gainDb: -1, q: 1.5 }, { shape: "highShelf", freqHz: 8000, gainDb: 1, q: 0.7, channel: "side" }] },
    { type: "saturate", driveDb: 6, blend: 0.3, oversample: 4 },
    { type: "compress", thresholdDb: -24, ratio: 2, kneeDb: 6, attackMs: 30, releaseMs: "auto", makeupDb: 1, rmsWindowMs: 20, sidechainHighPassHz: 80 },
    { type: "multiband", crossoversHz: [120, 1000, 4000], bands: [0, 1, 2, 3].map(() => ({ thresholdDb: -28, ratio: 1.5, kneeDb: 6, attackMs: 20, releaseMs: 150, makeupDb: 0, rmsWindowMs: 20 })) },
    { type: "limit", inputGainDb: 12, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 100, truePeak: true },
  ],
  output: { bitDepth: 24, dither: "tpdf" },
};

describe("renderFile", () => {
  const dir = tempDir();

  it("is deterministic, block-size independent, keeps length; traces on a 10 ms grid; no temporary file left", async () => {
    const input = join(dir, "mix.wav");
    await writeWav(input, synthMix(4, FS, 1), FS, 24, false);
    const a = await renderFile(input, join(dir, "a.wav"), chain(FULL));
    await renderFile(input, join(dir, "b.wav"), chain(FULL));
    await renderFile(input, join(dir, "c.wav"), chain(FULL), { readFrames: 1000 });
    const bytes = readFileSync(join(dir, "a.wav"));
    expect(bytes.equals(readFileSync(join(dir, "b.wav")))).toBe(true);
    expect(bytes.equals(readFileSync(join(dir, "c.wav")))).toBe(true);
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
    const out = await readWav(join(dir, "a.wav"));
    expect(out[0].length).toBe(4 * FS);
    expect(a.passes).toBe(1);
    expect(a.output.truePeakDbtp).toBeLessThanOrEqual(-1);
    expect(a.traces.gridMs).toBe(10);
    expect(a.traces.stages.map((s) => [s.index, s.type, s.names.length])).toEqual([[3, "compress", 1], [4, "multiband", 4], [5, "limit", 1]]);
    for (const s of a.traces.stages) for (const t of s.gainReductionDb) expect(t.length).toBe(400);
    expect(Math.max(...a.traces.stages[2].gainReductionDb[0])).toBeGreaterThan(0);
    expect(a.traces.shortTermLufs.length).toBe(400);
  });

  it("an impulse at frame n comes out at frame n through a chain with latency (saturation 4×, true-peak limiter)", async () => {
    const input = join(dir, "impulse.wav");
    const l = new Float64Array(FS), r = new Float64Array(FS);
    l[12345] = 0.5;
    r[12345] = 0.5;
    await writeWav(input, [l, r], FS, 32, true);
    const c = chain({
      stages: [
        { type: "saturate", driveDb: 0, blend: 0, oversample: 4 },
        { type: "limit", inputGainDb: 0, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 100, truePeak: true },
      ],
      output: { bitDepth: "32f", dither: "none" },
    });
    const res = await renderFile(input, join(dir, "impulse-out.wav"), c);
    expect(res.latencyFrames).toBeGreaterThan(100);
    const [L] = await readWav(join(dir, "impulse-out.wav"));
    expect(L.length).toBe(FS);
    let argmax = 0;
    for (let i = 0; i < L.length; i++) if (Math.abs(L[i]) > Math.abs(L[argmax])) argmax = i;
    expect(argmax).toBe(12345);
    // The limiter passes it unchanged (under its ceiling); the saturator at
    // blend 0 is its oversampler's round trip, whose impulse response peaks
    // where the chain's latency compensation puts it.
    const os = new Oversampler(4, 1, 64);
    const ir = new Float64Array(64);
    ir[0] = 0.5;
    os.up(0, ir, 64);
    os.down(0, ir, 64);
    expect(L[argmax]).toBeCloseTo(ir[os.latencyFrames], 6);
  });

  it("bypass null: all stages bypassed, float in → 32f out is bit-exact; 24-bit in → 24-bit out (TPDF) within 1 LSB", async () => {
    const mix = synthMix(2, FS, 2, -6);
    const bypassed = chain({ ...FULL, stages: FULL.stages.map((s) => ({ ...s, bypass: true })), output: { bitDepth: "32f", dither: "tpdf" } });
    const fin = join(dir, "float.wav");
    await writeWav(fin, mix, FS, 32, true);
    await renderFile(fin, join(dir, "float-out.wav"), bypassed);
    const a = readFileSync(fin), b = readFileSync(join(dir, "float-out.wav"));
    expect(b.subarray(b.length - 2 * 4 * 2 * FS).equals(a.subarray(a.length - 2 * 4 * 2 * FS))).toBe(true);
    const iin = join(dir, "int24.wav");
    await writeWav(iin, mix, FS, 24, false);
    await renderFile(iin, join(dir, "int24-out.wav"), { ...bypassed, output: { bitDepth: 24, dither: "tpdf" } });
    const [x] = await readWav(iin);
    const [y] = await readWav(join(dir, "int24-out.wav"));
    let maxLsb = 0;
    for (let i = 0; i < x.length; i++) maxLsb = Math.max(maxLsb, Math.abs(x[i] - y[i]) * 2 ** 23);
    expect(maxLsb).toBeLessThanOrEqual(1 + 1e-9);
    expect(maxLsb).toBeGreaterThan(0); // dither is really on
  });

  it("targetLufs: three different mixes land within ±0.1 LU (measured again on the written file)", async () => {
    const c = chain({
      stages: [
        { type: "compress", thresholdDb: -20, ratio: 2, kneeDb: 6, attackMs: 20, releaseMs: "auto", makeupDb: 0, rmsWindowMs: 20 },
        { type: "limit", inputGainDb: 0, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 80, truePeak: true },
      ],
      output: { bitDepth: 24, dither: "tpdf" },
    });
    const cases: [number, number, number][] = [
      [11, -24, -14],
      [12, -16, -10],
      [13, -30, -16],
    ];
    for (const [seed, levelDb, target] of cases) {
      const input = join(dir, `t${seed}.wav`);
      await writeWav(input, synthMix(6, FS, seed, levelDb), FS, 24, false);
      const out = join(dir, `t${seed}-out.wav`);
      const res = await renderFile(input, out, c, { targetLufs: target });
      expect(Math.abs(res.output.integratedLufs - target)).toBeLessThanOrEqual(0.1);
      expect(res.passes).toBeLessThanOrEqual(4);
      const written = await readWav(out);
      const m = new LoudnessMeter(FS, 2, { truePeak: true });
      m.process(written, written[0].length);
      expect(Math.abs(m.result().integratedLufs - target)).toBeLessThanOrEqual(0.1);
      expect(m.result().truePeakDbtp).toBeLessThanOrEqual(-1);
    }
  });

  it("preview without a region renders the loudest 30 s of a quiet–loud–quiet file", async () => {
    const quiet1 = synthMix(20, FS, 5, -40), loud = synthMix(30, FS, 6, -12), quiet2 = synthMix(20, FS, 7, -40);
    const both = [0, 1].map((c) => {
      const x = new Float64Array(70 * FS);
      x.set(quiet1[c]);
      x.set(loud[c], 20 * FS);
      x.set(quiet2[c], 50 * FS);
      return x;
    });
    const input = join(dir, "qlq.wav");
    await writeWav(input, both, FS, 24, false);
    const res = await renderFile(input, join(dir, "qlq-out.wav"), chain({ stages: [{ type: "trim", gainDb: 0 }], output: { bitDepth: 24, dither: "none" } }), { preview: true });
    expect(res.region!.endS - res.region!.startS).toBeCloseTo(30, 6);
    // The loud section is 20–50 s: the window must sit on it within a second.
    expect(Math.abs(res.region!.startS - 20)).toBeLessThan(1);
    const out = await readWav(join(dir, "qlq-out.wav"));
    expect(out[0].length).toBe(30 * FS);
    expect(res.output.integratedLufs).toBeGreaterThan(res.input.integratedLufs - 0.5);
  });

  it("an explicit region renders just that span", async () => {
    const input = join(dir, "region.wav");
    await writeWav(input, synthMix(5, FS, 8), FS, 24, false);
    const res = await renderFile(input, join(dir, "region-out.wav"), chain({ stages: [], output: { bitDepth: "32f", dither: "none" } }), { region: { startS: 1.5, endS: 3.25 } });
    const [src] = await readWav(input);
    const [out] = await readWav(join(dir, "region-out.wav"));
    expect(out.length).toBe(1.75 * FS);
    for (let i = 0; i < out.length; i += 997) expect(out[i]).toBe(src[1.5 * FS + i]);
    expect(res.region).toEqual({ startS: 1.5, endS: 3.25 });
  });

  it("rejects an output sample rate different from the input's", async () => {
    const input = join(dir, "sr.wav");
    await writeWav(input, synthMix(0.5, FS, 9), FS, 24, false);
    await expect(renderFile(input, join(dir, "sr-out.wav"), chain({ stages: [], output: { sampleRate: 44100 } }))).rejects.toThrow(/sample rate 44100 Hz differs from the input's 48000 Hz/);
  });
});

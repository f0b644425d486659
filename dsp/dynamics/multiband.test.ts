import { describe, expect, it } from "vitest";
import { whiteNoise } from "../testing/signals.ts";
import { BandSplitter } from "../filters/crossover.ts";
import { Compressor } from "./compressor.ts";
import { MultibandCompressor, type MultibandBandSettings } from "./multiband.ts";

const FS = 48000;

function band(over: Partial<MultibandBandSettings> = {}): MultibandBandSettings {
  return { thresholdDb: -40, ratio: 1, kneeDb: 6, attackMs: 10, releaseMs: 100, makeupDb: 0, rmsWindowMs: 20, ...over };
}

/** Magnitude (dB) of a long impulse response at one frequency (direct DFT). */
function magnitudeDb(h: Float64Array, freqHz: number): number {
  let re = 0, im = 0;
  for (let i = 0; i < h.length; i++) {
    re += h[i] * Math.cos((2 * Math.PI * freqHz * i) / FS);
    im -= h[i] * Math.sin((2 * Math.PI * freqHz * i) / FS);
  }
  return 10 * Math.log10(re * re + im * im);
}

describe("multiband", () => {
  it("all ratios 1: the summed bands are all-pass, flat within ±0.01 dB from 20 Hz to 20 kHz (analytic: LR4 bands with all-pass compensation sum to an all-pass)", () => {
    const mb = new MultibandCompressor(FS, 1, { crossoversHz: [90, 1000, 3000, 8000], bands: [band(), band(), band(), band(), band()] }, 4096);
    const h = new Float64Array(FS);
    h[0] = 1;
    for (let off = 0; off < h.length; off += 4096) {
      const n = Math.min(4096, h.length - off);
      mb.process([h.subarray(off, off + n)], n);
    }
    for (const f of [20, 50, 90, 200, 700, 1000, 2000, 3000, 5000, 8000, 12000, 16000, 20000]) {
      expect(Math.abs(magnitudeDb(h, f))).toBeLessThan(0.01);
    }
  });

  it("stereo, four compressing bands on the control-rate path (gains interpolated inside the sum) equal the splitter's bands times each band compressor's gain(), to the bit, for any block size", () => {
    const crossoversHz = [90, 1000, 3000];
    const bands = [0, 1, 2, 3].map((k) => band({ thresholdDb: -30 - k, ratio: 2 + k / 2, attackMs: 15, releaseMs: k === 2 ? "auto" : 120, makeupDb: k / 2 }));
    const frames = 24000;
    const l = whiteNoise(frames, 61).map((v, i) => v * (i % 9600 < 4800 ? 1 : 0.1));
    const r = whiteNoise(frames, 62).map((v, i) => v * (i % 7200 < 3600 ? 0.8 : 0.05));
    // Reference: split, each band's gain() into an array, summed.
    const split = new BandSplitter(FS, 2, crossoversHz, 480);
    const comps = bands.map((b) => new Compressor(FS, 2, b, 480));
    expect(comps.every((c) => c.controlFrames === 4)).toBe(true);
    const ref = [new Float64Array(frames), new Float64Array(frames)];
    const g = bands.map(() => new Float64Array(480));
    for (let off = 0; off < frames; off += 480) {
      split.split([l.subarray(off, off + 480), r.subarray(off, off + 480)], 480);
      comps.forEach((c, k) => c.gain(split.bands[k], 480, g[k]));
      for (let ch = 0; ch < 2; ch++) {
        const bb = split.bands;
        for (let i = 0; i < 480; i++) ref[ch][off + i] = bb[0][ch][i] * g[0][i] + bb[1][ch][i] * g[1][i] + (bb[2][ch][i] * g[2][i] + bb[3][ch][i] * g[3][i]);
      }
    }
    let reduced = false;
    for (const block of [480, 333]) {
      const mb = new MultibandCompressor(FS, 2, { crossoversHz, bands }, 480);
      const out = [l.slice(), r.slice()];
      for (let off = 0; off < frames; off += block) {
        const n = Math.min(block, frames - off);
        mb.process(out.map((x) => x.subarray(off, off + n)), n);
        const gr = new Float64Array(4);
        mb.takeGainReductionDb(gr);
        if (gr.every((v) => v > 0.5)) reduced = true;
      }
      expect(Array.from(out[0])).toEqual(Array.from(ref[0]));
      expect(Array.from(out[1])).toEqual(Array.from(ref[1]));
    }
    expect(reduced).toBe(true);
  });

  it("stereo, four bands (the one-pass sum): the output is the splitter's bands times each band's gain (makeup 0, 1, 2, 3 dB at ratio 1)", () => {
    const crossoversHz = [90, 1000, 3000];
    const mb = new MultibandCompressor(FS, 2, { crossoversHz, bands: [0, 1, 2, 3].map((makeupDb) => band({ makeupDb })) }, 4800);
    const split = new BandSplitter(FS, 2, crossoversHz, 4800);
    const l = whiteNoise(4800, 51), r = whiteNoise(4800, 52);
    split.split([l, r], 4800);
    mb.process([l, r], 4800);
    for (let i = 0; i < 4800; i++) {
      let el = 0, er = 0;
      for (let b = 0; b < 4; b++) {
        el += split.bands[b][0][i] * 10 ** (b / 20);
        er += split.bands[b][1][i] * 10 ** (b / 20);
      }
      expect(l[i]).toBeCloseTo(el, 12);
      expect(r[i]).toBeCloseTo(er, 12);
    }
  });

  it("a 5 kHz tone compresses only its own band; the other bands' GR stays zero", () => {
    const mb = new MultibandCompressor(
      FS,
      2,
      { crossoversHz: [90, 1000, 3000], bands: [band({ ratio: 2, thresholdDb: -30 }), band({ ratio: 2, thresholdDb: -30 }), band({ ratio: 2, thresholdDb: -30 }), band({ ratio: 2, thresholdDb: -30 })] },
      4800,
    );
    const l = new Float64Array(4800), r = new Float64Array(4800);
    const gr = new Float64Array(4);
    let phase = 0;
    for (let block = 0; block < 10; block++) {
      for (let i = 0; i < 4800; i++, phase++) l[i] = r[i] = 0.5 * Math.sin((2 * Math.PI * 5000 * phase) / FS);
      mb.process([l, r], 4800);
      mb.takeGainReductionDb(gr);
    }
    expect(gr[3]).toBeGreaterThan(5);
    // LR4 skirts at 5 kHz from a 3 kHz crossover: band 3 sees the tone ~9 dB down (it is 21 dB over threshold), so it reduces a little; bands 1 and 2 see nothing.
    expect(gr[0]).toBe(0);
    expect(gr[1]).toBe(0);
  });

  it("solo renders only the soloed band; per-band bypass leaves that band uncompressed", () => {
    const bands = [band({ solo: true }), band(), band()];
    const mb = new MultibandCompressor(FS, 1, { crossoversHz: [200, 2000], bands }, 4800);
    const low = new Float64Array(4800).map((_, i) => 0.3 * Math.sin((2 * Math.PI * 5000 * i) / FS));
    mb.process([low], 4800);
    let peak = 0;
    for (let i = 2400; i < 4800; i++) peak = Math.max(peak, Math.abs(low[i]));
    // A 5 kHz tone is in band 3; band 1 (below 200 Hz) lets through < −60 dB of it.
    expect(20 * Math.log10(peak / 0.3)).toBeLessThan(-60);

    const byp = new MultibandCompressor(FS, 1, { crossoversHz: [1000], bands: [band(), band({ bypass: true, ratio: 20, thresholdDb: -60 })] }, 4800);
    const x = new Float64Array(4800).map((_, i) => 0.5 * Math.sin((2 * Math.PI * 8000 * i) / FS));
    byp.process([x], 4800);
    const gr = new Float64Array(2);
    byp.takeGainReductionDb(gr);
    expect(gr[1]).toBe(0);
    // RMS, not sample peak: the all-pass phase moves where the samples fall on the cycle.
    let ms = 0;
    for (let i = 2400; i < 4800; i++) ms += x[i] * x[i];
    expect(Math.abs(10 * Math.log10(ms / 2400 / 0.125))).toBeLessThan(0.01);
  });
});

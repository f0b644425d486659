// Linkwitz-Riley 4th order, checked analytically (LR4 = Butterworth², −6.02 dB
// at the crossover, 24 dB/octave asymptote) and through the processor.
import { describe, expect, it } from "vitest";
import { whiteNoise } from "../testing/signals.ts";
import { biquadMagnitudeDb } from "./biquad-design.ts";
import { BandSplitter, designLinkwitzRiley4 } from "./crossover.ts";

const lr4Db = (c: ReturnType<typeof designLinkwitzRiley4>, which: "lowPass" | "highPass", f: number, fs: number) =>
  2 * biquadMagnitudeDb(c[which], f, fs);

/** Magnitude (dB) of an impulse response at freqHz by direct DFT. */
function dftMagnitudeDb(h: Float64Array, freqHz: number, fs: number): number {
  const w = (2 * Math.PI * freqHz) / fs;
  let re = 0;
  let im = 0;
  for (let n = 0; n < h.length; n++) {
    re += h[n] * Math.cos(w * n);
    im -= h[n] * Math.sin(w * n);
  }
  return 10 * Math.log10(re * re + im * im);
}

describe("Linkwitz-Riley 4th order (analytic)", () => {
  it("low and high are each −6.02 dB at the crossover", () => {
    for (const fs of [44100, 48000, 96000]) {
      for (const fc of [90, 1000, 3000]) {
        const c = designLinkwitzRiley4(fc, fs);
        expect(lr4Db(c, "lowPass", fc, fs)).toBeCloseTo(-6.0206, 3);
        expect(lr4Db(c, "highPass", fc, fs)).toBeCloseTo(-6.0206, 3);
      }
    }
  });

  it("slopes approach 24 dB/octave well past the crossover", () => {
    const fs = 96000;
    const c = designLinkwitzRiley4(1000, fs);
    // Octave 8→16 kHz above a 1 kHz crossover (low-pass), 31.25→15.625 Hz below it (high-pass).
    const lowSlope = lr4Db(c, "lowPass", 8000, fs) - lr4Db(c, "lowPass", 16000, fs);
    const highSlope = lr4Db(c, "highPass", 31.25, fs) - lr4Db(c, "highPass", 15.625, fs);
    // "24 dB/octave" is the rounded figure; 4th order is exactly 20·log10(2⁴) = 24.08 dB/octave.
    expect(highSlope).toBeCloseTo(24.08, 2);
    // The bilinear transform steepens the low-pass near Nyquist, so only a lower bound there.
    expect(lowSlope).toBeGreaterThan(23.5);
    const c48 = designLinkwitzRiley4(200, 48000);
    expect(lr4Db(c48, "lowPass", 1600, 48000) - lr4Db(c48, "lowPass", 3200, 48000)).toBeCloseTo(24.08, 0);
  });
});

describe("BandSplitter (through the processor)", () => {
  for (const fs of [44100, 48000, 96000]) {
    it(`90 Hz / 1 kHz / 3 kHz bands sum flat within ±0.01 dB from 20 Hz to 20 kHz at ${fs} Hz`, () => {
      const frames = fs; // 1 s impulse response: the slowest pole (90 Hz) has decayed far below 1e-12
      const sp = new BandSplitter(fs, 1, [90, 1000, 3000], frames);
      const imp = new Float64Array(frames);
      imp[0] = 1;
      sp.split([imp], frames);
      const sum = new Float64Array(frames);
      for (let b = 0; b < sp.bandCount; b++) for (let i = 0; i < frames; i++) sum[i] += sp.bands[b][0][i];
      for (const f of [20, 45, 90, 150, 500, 1000, 2000, 3000, 5000, 10000, 15000, 20000]) {
        expect(Math.abs(dftMagnitudeDb(sum, f, fs))).toBeLessThan(0.01);
      }
      // Each band is where it should be: band 0 passes 40 Hz and rejects 10 kHz.
      expect(dftMagnitudeDb(sp.bands[0][0], 40, fs)).toBeGreaterThan(-0.5);
      expect(dftMagnitudeDb(sp.bands[0][0], 10000, fs)).toBeLessThan(-80);
      expect(dftMagnitudeDb(sp.bands[3][0], 10000, fs)).toBeGreaterThan(-0.5);
      expect(dftMagnitudeDb(sp.bands[1][0], 300, fs)).toBeGreaterThan(-1);
    });
  }

  it("2 to 5 bands all sum flat; the input is untouched", () => {
    const fs = 48000;
    for (const xs of [[500], [120, 2500], [90, 1000, 3000], [60, 250, 2000, 8000]]) {
      const sp = new BandSplitter(fs, 2, xs, 24000);
      expect(sp.bandCount).toBe(xs.length + 1);
      const imp = new Float64Array(24000);
      imp[0] = 1;
      sp.split([imp, imp], 24000);
      expect(imp[0]).toBe(1);
      const sum = new Float64Array(24000);
      for (let b = 0; b < sp.bandCount; b++) for (let i = 0; i < 24000; i++) sum[i] += sp.bands[b][1][i];
      for (const f of [30, 100, 1000, 7000, 19000]) expect(Math.abs(dftMagnitudeDb(sum, f, fs))).toBeLessThan(0.01);
    }
  });

  it("block size never changes the bands", () => {
    const x = whiteNoise(5000, 11);
    const run = (block: number) => {
      const sp = new BandSplitter(44100, 1, [90, 1000, 3000], 4096);
      const out = Array.from({ length: 4 }, () => new Float64Array(5000));
      for (let s = 0; s < 5000; s += block) {
        const n = Math.min(block, 5000 - s);
        sp.split([x.subarray(s, s + n)], n);
        for (let b = 0; b < 4; b++) out[b].set(sp.bands[b][0].subarray(0, n), s);
      }
      return out;
    };
    const a = run(4096);
    expect(run(1)).toEqual(a);
    expect(run(137)).toEqual(a);
  });

  it("one crossover: the processor's low and high bands are the analytic LR4 (−6.02 dB at fc, Butterworth² elsewhere); reset clears", () => {
    const fs = 48000;
    const sp = new BandSplitter(fs, 1, [1000], fs);
    const c = designLinkwitzRiley4(1000, fs);
    const imp = new Float64Array(fs);
    imp[0] = 1;
    for (let pass = 0; pass < 2; pass++) {
      sp.split([imp], fs);
      for (const f of [100, 1000, 5000]) {
        expect(dftMagnitudeDb(sp.bands[0][0], f, fs)).toBeCloseTo(lr4Db(c, "lowPass", f, fs), 6);
        expect(dftMagnitudeDb(sp.bands[1][0], f, fs)).toBeCloseTo(lr4Db(c, "highPass", f, fs), 6);
      }
      expect(dftMagnitudeDb(sp.bands[0][0], 1000, fs)).toBeCloseTo(-6.02, 2);
      sp.reset();
    }
    // Silence after the impulse decays to exact zeros (no subnormal numbers left in the state).
    const silent = new Float64Array(fs);
    sp.split([imp], fs);
    for (let r = 0; r < 3; r++) sp.split([silent], fs);
    expect(sp.bands[0][0].every((v) => v === 0)).toBe(true);
    expect(sp.bands[1][0].every((v) => v === 0)).toBe(true);
  });

  it("rejects bad crossovers", () => {
    expect(() => new BandSplitter(48000, 2, [], 64)).toThrow(RangeError);
    expect(() => new BandSplitter(48000, 2, [1, 2, 3, 4, 5], 64)).toThrow(RangeError);
    expect(() => new BandSplitter(48000, 2, [1000, 500], 64)).toThrow(RangeError);
    expect(() => new BandSplitter(48000, 2, [30000], 64)).toThrow(RangeError);
  });
});

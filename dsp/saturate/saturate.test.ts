import { describe, expect, it } from "vitest";
import { designHalfBand, halfBandMagnitudeDb } from "./half-band.ts";
import { Oversampler, stage1Filter, stage2Filter } from "./oversampler.ts";
import { levelCompensation, REFERENCE_PEAK_DB, Saturator, softClip } from "./saturator.ts";
import { sine } from "../testing/signals.ts";
import { linearToDb } from "../units.ts";

const FS = 48000;

function rmsDb(x: Float64Array, from: number, to: number): number {
  let s = 0;
  for (let i = from; i < to; i++) s += x[i] * x[i];
  return 10 * Math.log10(s / (to - from));
}

/** Amplitude (dB re 1) of one frequency, Hann-windowed DFT bin. */
function toneDb(x: Float64Array, from: number, n: number, freqHz: number): number {
  let re = 0, im = 0, wsum = 0;
  for (let i = 0; i < n; i++) {
    const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
    const ph = (2 * Math.PI * freqHz * i) / FS;
    re += w * x[from + i] * Math.cos(ph);
    im += w * x[from + i] * Math.sin(ph);
    wsum += w;
  }
  return 20 * Math.log10((2 * Math.hypot(re, im)) / wsum);
}

function run(proc: { process(c: Float64Array[], n: number): void }, x: Float64Array, block = 1000): Float64Array {
  const y = x.slice();
  for (let off = 0; off < y.length; off += block) {
    const n = Math.min(block, y.length - off);
    const part = y.subarray(off, off + n);
    proc.process([part], n);
  }
  return y;
}

describe("half-band all-pass pairs (analytic: the transfer function ½[A0(z²) + z⁻¹A1(z²)] evaluated directly; power complementarity of a half-band pair, Vaidyanathan, Multirate Systems and Filter Banks, 1993, from memory)", () => {
  it.each([
    ["stage 1", stage1Filter, 0.2083, 0.2917, -110],
    ["stage 2", stage2Filter, 0.125, 0.375, -115],
  ] as const)("%s: passband flat within 1e-6 dB, stopband below its design attenuation", (_name, filter, pass, stop, stopDb) => {
    const h = filter();
    for (let f = 0; f <= pass; f += 0.001) expect(Math.abs(halfBandMagnitudeDb(h, f))).toBeLessThan(1e-6);
    let worst = -Infinity;
    for (let f = stop; f <= 0.5; f += 0.0005) worst = Math.max(worst, halfBandMagnitudeDb(h, f));
    expect(worst).toBeLessThan(stopDb);
    // …and not far below it: the design is not over-long for its spec.
    expect(worst).toBeGreaterThan(stopDb - 10);
  });

  it("a half-band filter is power-complementary: |H(f)|² + |H(½ − f)|² = 1, and −3.01 dB at a quarter of the rate", () => {
    const h = designHalfBand(5, 0.1);
    for (let f = 0; f <= 0.5; f += 0.01) {
      const p = 10 ** (halfBandMagnitudeDb(h, f) / 10) + 10 ** (halfBandMagnitudeDb(h, 0.5 - f) / 10);
      expect(p).toBeCloseTo(1, 9);
    }
    expect(halfBandMagnitudeDb(h, 0.25)).toBeCloseTo(-3.0103, 3);
  });

  it("every coefficient lies in (0, 1), so each all-pass section is stable", () => {
    for (const h of [stage1Filter(), stage2Filter()]) for (const a of [...h.branch0, ...h.branch1]) expect(a > 0 && a < 1).toBe(true);
  });

  it("rejects a bad design request", () => {
    expect(() => designHalfBand(0, 0.1)).toThrow(/count/);
    expect(() => designHalfBand(4, 0.6)).toThrow(/transition/);
  });
});

describe("oversampler round trip (analytic: a tone's level through up and down, measured with a windowed DFT bin)", () => {
  it.each([2, 4] as const)("%d×: tones from 20 Hz to 20 kHz come back at their level within 0.001 dB", (factor) => {
    for (const freqHz of [20, 100, 1000, 5000, 10000, 15000, 20000]) {
      const os = new Oversampler(factor, 1, 512);
      const x = sine(40 * 512, freqHz, FS, linearToDb(0.5));
      const y = new Float64Array(x.length);
      const buf = new Float64Array(512);
      for (let off = 0; off < x.length; off += 512) {
        buf.set(x.subarray(off, off + 512));
        os.up(0, buf, 512);
        os.down(0, buf, 512);
        y.set(buf, off);
      }
      expect(Math.abs(toneDb(y, 8192, 8192, freqHz) - toneDb(x, 8192, 8192, freqHz))).toBeLessThan(0.001);
    }
  });

  it.each([2, 4] as const)("%d×: an impulse's round trip peaks latencyFrames later, with most of its energy within 3 frames of the peak", (factor) => {
    const os = new Oversampler(factor, 1, 256);
    const x = new Float64Array(256);
    x[10] = 1;
    os.up(0, x, 256);
    os.down(0, x, 256);
    const L = os.latencyFrames;
    expect(L).toBeGreaterThan(0);
    expect(L).toBeLessThan(12);
    let argmax = 0, energy = 0, near = 0;
    for (let i = 0; i < 256; i++) {
      if (Math.abs(x[i]) > Math.abs(x[argmax])) argmax = i;
      energy += x[i] * x[i];
      if (Math.abs(i - 10 - L) <= 3) near += x[i] * x[i];
    }
    expect(argmax).toBe(10 + L);
    expect(x[argmax]).toBeGreaterThan(0.5);
    // The rest rings at the top of the band (the transition, 20–24 kHz at 48 kHz).
    expect(near / energy).toBeGreaterThan(0.66);
  });
});

describe("saturator", () => {
  it("softClip follows Math.tanh within 1.1e-4 (1e-6 up to |x| = 3), is odd and reaches ±1", () => {
    for (let x = -8; x <= 8; x += 0.001) {
      const err = Math.abs(softClip(x) - Math.tanh(x));
      expect(err).toBeLessThan(Math.abs(x) <= 3 ? 1e-6 : 1.1e-4);
      expect(softClip(-x)).toBe(-softClip(x));
      expect(Math.abs(softClip(x))).toBeLessThanOrEqual(1);
    }
    expect(softClip(100)).toBeCloseTo(1, 12);
  });

  it.each([0, 6, 12, 18].flatMap((d) => [[d, 2], [d, 4]] as const))("blend 0 vs 1 at %d dB drive, %d×: level of a 1 kHz sine at the reference level within 0.5 dB", (driveDb, oversample) => {
    const x = sine(FS / 2, 1000, FS, REFERENCE_PEAK_DB);
    const dry = run(new Saturator(FS, 1, { driveDb, blend: 0, oversample }, 1000), x);
    const wet = run(new Saturator(FS, 1, { driveDb, blend: 1, oversample }, 1000), x);
    const half = run(new Saturator(FS, 1, { driveDb, blend: 0.5, oversample }, 1000), x);
    const ref = rmsDb(dry, 4800, x.length);
    expect(Math.abs(rmsDb(wet, 4800, x.length) - ref)).toBeLessThan(0.5);
    expect(Math.abs(rmsDb(half, 4800, x.length) - ref)).toBeLessThan(0.5);
  });

  it("blend 0 is the oversampler's round trip: the dry signal, phase-shifted only, at any drive", () => {
    const sat = new Saturator(FS, 1, { driveDb: 12, blend: 0, oversample: 2 }, 1000);
    const x = sine(4800, 440, FS, linearToDb(0.5));
    const y = run(sat, x);
    const os = new Oversampler(2, 1, 4800);
    const ref = x.slice();
    os.up(0, ref, 4800);
    os.down(0, ref, 4800);
    for (let i = 0; i < x.length; i++) expect(Math.abs(y[i] - ref[i])).toBeLessThan(1e-15);
    expect(Math.abs(toneDb(y, 1000, 3000, 440) - toneDb(x, 1000, 3000, 440))).toBeLessThan(0.001);
  });

  it.each([2, 4] as const)("%d× (one fused pass) equals its definition, bit for bit: oversampler up, dry/wet mix of the curve at the high rate, down", (factor) => {
    const driveDb = 9, blend = 0.4, block = 333;
    const drive = 10 ** (driveDb / 20);
    const wetGain = (blend * levelCompensation(drive, 10 ** (REFERENCE_PEAK_DB / 20))) / drive;
    const x = [sine(9000, 7000, FS, linearToDb(0.9)), sine(9000, 150, FS, linearToDb(0.6)).map((v, i) => v + 0.3 * Math.sin(i * 1.7))];
    const sat = new Saturator(FS, 2, { driveDb, blend, oversample: factor }, block);
    const y = x.map((c) => c.slice());
    for (let off = 0; off < 9000; off += block) {
      const n = Math.min(block, 9000 - off);
      sat.process(y.map((c) => c.subarray(off, off + n)), n);
    }
    const os = new Oversampler(factor, 2, 9000);
    expect(sat.latencyFrames).toBe(os.latencyFrames);
    for (let c = 0; c < 2; c++) {
      const ref = new Float64Array(9000);
      const high = os.up(c, x[c], 9000);
      for (let i = 0; i < 9000 * factor; i++) high[i] = (1 - blend) * high[i] + wetGain * softClip(drive * high[i]);
      os.down(c, ref, 9000);
      for (let i = 0; i < 9000; i++) expect(y[c][i]).toBe(ref[i]);
    }
  });

  it.each([2, 4] as const)("%d×: silence after a loud passage decays to exact zeros (no subnormal numbers), the same for any block size", (factor) => {
    const frames = 60000;
    const x = new Float64Array(frames);
    x.set(sine(2000, 3000, FS, linearToDb(0.9)));
    const a = run(new Saturator(FS, 1, { driveDb: 12, blend: 0.5, oversample: factor }, 1000), x, 1000);
    const b = run(new Saturator(FS, 1, { driveDb: 12, blend: 0.5, oversample: factor }, 1000), x, 333);
    expect(Array.from(b)).toEqual(Array.from(a));
    // Left alone the slowest all-pass (a ≈ 0.91) would take about 7,700
    // frames to underflow through the subnormals; flushed, 3,000 is plenty.
    expect(a.subarray(5000).every((v) => v === 0)).toBe(true);
    expect(Math.max(...a.subarray(2000, 2100).map(Math.abs))).toBeGreaterThan(1e-6);
  });

  it.each([2, 4] as const)("aliasing at %d×: the 3rd harmonic of a 15 kHz tone (45 kHz → alias at 3 kHz) is far lower than without oversampling", (factor) => {
    const driveDb = 12;
    const peak = 0.5;
    const x = sine(FS / 2, 15000, FS, linearToDb(peak));
    const y4 = run(new Saturator(FS, 1, { driveDb, blend: 1, oversample: factor }, 1000), x);
    // Reference without oversampling: the same curve at the base rate.
    const d = 10 ** (driveDb / 20);
    const y1 = x.map((v) => softClip(d * v) / d);
    const alias1 = toneDb(y1, 4800, 8192, 3000);
    const alias4 = toneDb(y4, 4800, 8192, 3000);
    expect(alias1).toBeGreaterThan(-30);
    expect(alias4).toBeLessThan(alias1 - 50);
  });
});

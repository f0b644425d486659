import { describe, expect, it } from "vitest";
import { designHalfBand, firMagnitudeDb } from "./half-band.ts";
import { Oversampler, STAGE1_TAPS, STAGE2_TAPS } from "./oversampler.ts";
import { levelCompensation, REFERENCE_PEAK_DB, Saturator, softClip } from "./saturator.ts";

const FS = 48000;

function sine(frames: number, freqHz: number, peak: number): Float64Array {
  const out = new Float64Array(frames);
  for (let i = 0; i < frames; i++) out[i] = peak * Math.sin((2 * Math.PI * freqHz * i) / FS);
  return out;
}

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

describe("half-band filters (Kaiser design, analytic frequency response of the taps)", () => {
  it.each([
    [STAGE1_TAPS, 0.2083, 0.2917],
    [STAGE2_TAPS, 0.125, 0.375],
  ])("%d taps: passband flat within 0.001 dB, stopband below −95 dB", (taps, pass, stop) => {
    const h = designHalfBand(taps, 100);
    for (let f = 0; f <= pass; f += 0.005) expect(Math.abs(firMagnitudeDb(h, f))).toBeLessThan(0.001);
    for (let f = stop; f <= 0.5; f += 0.005) expect(firMagnitudeDb(h, f)).toBeLessThan(-95);
  });
});

describe("oversampler round trip", () => {
  it.each([2, 4] as const)("%d×: a 5 kHz tone comes back delayed by latencyFrames, error below −90 dB", (factor) => {
    const os = new Oversampler(factor, 1, 512);
    const x = sine(19 * 512, 5000, 0.5);
    const y = new Float64Array(x.length);
    const buf = new Float64Array(512);
    for (let off = 0; off < x.length; off += 512) {
      buf.set(x.subarray(off, off + 512));
      os.up(0, buf, 512);
      os.down(0, buf, 512);
      y.set(buf, off);
    }
    const L = os.latencyFrames;
    expect(L).toBe(factor === 2 ? 39 : 48);
    let err = 0, sig = 0;
    for (let i = 2000; i < x.length; i++) {
      err += (y[i] - x[i - L]) ** 2;
      sig += x[i - L] ** 2;
    }
    expect(10 * Math.log10(err / sig)).toBeLessThan(-90);
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

  it.each([0, 6, 12, 18])("blend 0 vs 1 at %d dB drive: level of a 1 kHz sine at the reference level within 0.5 dB", (driveDb) => {
    const x = sine(FS / 2, 1000, 10 ** (REFERENCE_PEAK_DB / 20));
    const dry = run(new Saturator(FS, 1, { driveDb, blend: 0, oversample: 4 }, 1000), x);
    const wet = run(new Saturator(FS, 1, { driveDb, blend: 1, oversample: 4 }, 1000), x);
    const half = run(new Saturator(FS, 1, { driveDb, blend: 0.5, oversample: 4 }, 1000), x);
    const ref = rmsDb(dry, 4800, x.length);
    expect(Math.abs(rmsDb(wet, 4800, x.length) - ref)).toBeLessThan(0.5);
    expect(Math.abs(rmsDb(half, 4800, x.length) - ref)).toBeLessThan(0.5);
  });

  it("blend 0 is the dry signal delayed by latencyFrames", () => {
    const sat = new Saturator(FS, 1, { driveDb: 12, blend: 0, oversample: 2 }, 1000);
    const x = sine(4800, 440, 0.5);
    const y = run(sat, x);
    for (let i = sat.latencyFrames; i < x.length; i++) expect(y[i]).toBe(x[i - sat.latencyFrames]);
  });

  it("2× (one fused pass) equals its definition: oversampler up, the curve, down, mixed with the dry signal delayed by the latency", () => {
    const driveDb = 9, blend = 0.4, block = 333;
    const drive = 10 ** (driveDb / 20);
    const wetGain = (blend * levelCompensation(drive, 10 ** (REFERENCE_PEAK_DB / 20))) / drive;
    const x = [sine(9000, 7000, 0.9), sine(9000, 150, 0.6).map((v, i) => v + 0.3 * Math.sin(i * 1.7))];
    const sat = new Saturator(FS, 2, { driveDb, blend, oversample: 2 }, block);
    const y = x.map((c) => c.slice());
    for (let off = 0; off < 9000; off += block) {
      const n = Math.min(block, 9000 - off);
      sat.process(y.map((c) => c.subarray(off, off + n)), n);
    }
    const os = new Oversampler(2, 2, 9000);
    const L = os.latencyFrames;
    expect(sat.latencyFrames).toBe(L);
    for (let c = 0; c < 2; c++) {
      const wet = new Float64Array(9000);
      const high = os.up(c, x[c], 9000);
      for (let i = 0; i < 18000; i++) high[i] = softClip(drive * high[i]);
      os.down(c, wet, 9000);
      for (let i = 0; i < 9000; i++) {
        const ref = (1 - blend) * (i >= L ? x[c][i - L] : 0) + wetGain * wet[i];
        expect(Math.abs(y[c][i] - ref)).toBeLessThan(1e-12);
      }
    }
  });

  it("aliasing: the 3rd harmonic of a 15 kHz tone (45 kHz → alias at 3 kHz) is far lower at 4× than without oversampling", () => {
    const driveDb = 12;
    const peak = 0.5;
    const x = sine(FS / 2, 15000, peak);
    const y4 = run(new Saturator(FS, 1, { driveDb, blend: 1, oversample: 4 }, 1000), x);
    // Reference without oversampling: the same curve at the base rate.
    const d = 10 ** (driveDb / 20);
    const y1 = x.map((v) => softClip(d * v) / d);
    const alias1 = toneDb(y1, 4800, 8192, 3000);
    const alias4 = toneDb(y4, 4800, 8192, 3000);
    expect(alias1).toBeGreaterThan(-30);
    expect(alias4).toBeLessThan(alias1 - 50);
  });
});

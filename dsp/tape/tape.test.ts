import { describe, expect, it } from "vitest";
import { biquadPowerGain, designBiquad } from "../filters/biquad-design.ts";
import { FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { Oversampler } from "../saturate/oversampler.ts";
import { gaussian, pinkNoise, rmsDb, runBlocks, toneDb } from "../test-signals.test-util.ts";
import { BUMP_Q, curveDrive, tapeCurve, designBump, designLoss, EMPHASIS_HZ, TapeStage, tapeSmallSignalDb, wetCompensation, type TapeSettings } from "./tape.ts";
import FFT from "fft.js";

const FS = 48000;
const BASE: TapeSettings = { driveDb: 6, bumpHz: 80, bumpDb: 3, rolloffHz: 16000, blend: 1, oversample: 4 };

const sine = (frames: number, freqHz: number, peak: number, fs = FS) => Float64Array.from({ length: frames }, (_, i) => peak * Math.sin((2 * Math.PI * freqHz * i) / fs));

function maxAbsDiff(a: Float64Array, b: Float64Array): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

/** Total harmonic distortion (dB re the fundamental), harmonics 2–15, of a 100 Hz sine at −12 dBFS. */
function thdDb(settings: TapeSettings): number {
  const y = runBlocks(new TapeStage(FS, 1, settings, 1000), [sine(FS, 100, 10 ** (-12 / 20))], 1000)[0];
  const f0 = toneDb(y, 12000, 24000, 100, FS);
  let h = 0;
  for (let k = 2; k <= 15; k++) h += 10 ** (toneDb(y, 12000, 24000, 100 * k, FS) / 10);
  return 10 * Math.log10(h) - f0;
}

describe("tape stage: small-signal response equals its designed linear filters (RBJ cookbook peaking filter; first-order bilinear low-pass)", () => {
  it.each([2, 4] as const)("%d×, −40 dBFS tones: the bump at bumpHz is within 0.2 dB of bumpDb, 1 kHz is 0 ± 0.2 dB, and every tone matches tapeSmallSignalDb within 0.05 dB", (oversample) => {
    for (const [bumpHz, bumpDb] of [[30, 6], [80, 3], [200, 6]]) {
      const settings: TapeSettings = { ...BASE, driveDb: 0, bumpHz, bumpDb, oversample };
      const at = (f: number) => toneDb(runBlocks(new TapeStage(FS, 1, settings, 1000), [sine(FS, f, 0.01)], 1000)[0], 24000, 16384, f, FS) + 40;
      expect(Math.abs(at(bumpHz) - settings.bumpDb)).toBeLessThan(0.2);
      expect(Math.abs(at(1000))).toBeLessThan(0.2);
      for (const f of [bumpHz / 2, bumpHz, 2 * bumpHz, 1000, 8000, 16000, 20000]) expect(Math.abs(at(f) - tapeSmallSignalDb(settings, FS, f)), `${f} Hz`).toBeLessThan(0.05);
    }
  });

  it("tapeSmallSignalDb is the cookbook peaking filter (bumpHz, bumpDb, Q 1.4) times the loss, −3 dB at rolloffHz, plus the small-signal gain", () => {
    const s: TapeSettings = { ...BASE, driveDb: 0, blend: 1 };
    const g0 = tapeSmallSignalDb({ ...s, bumpDb: 0, rolloffHz: null }, FS, 1000);
    const peak = designBiquad("peak", { freqHz: s.bumpHz, gainDb: s.bumpDb, q: BUMP_Q }, FS);
    for (const f of [20, 50, 80, 120, 300]) expect(tapeSmallSignalDb({ ...s, rolloffHz: null }, FS, f) - g0).toBeCloseTo(10 * Math.log10(biquadPowerGain(peak, f, FS)), 9);
    expect(tapeSmallSignalDb({ ...s, bumpDb: 0 }, FS, s.rolloffHz!) - g0).toBeCloseTo(-3.0103, 3);
    expect(designBump({ bumpHz: 80, bumpDb: 0 }, FS)).toBeNull();
    expect(designLoss(null, FS)).toBeNull();
    expect(designLoss(22000, 44100)).toBeNull(); // at the very top of the band it is left out
  });
});

describe("tape stage: the non-linear part", () => {
  it("the curve: odd, slope 1 at 0, ±1 with zero slope at ±3 and beyond, monotonic, within 0.025 of tanh", () => {
    expect(tapeCurve(3)).toBe(1);
    expect(tapeCurve(50)).toBe(1);
    expect((tapeCurve(1e-6) - tapeCurve(-1e-6)) / 2e-6).toBeCloseTo(1, 9);
    expect((tapeCurve(3) - tapeCurve(3 - 1e-6)) / 1e-6).toBeCloseTo(0, 5);
    let prev = -Infinity;
    for (let x = -4; x <= 4; x += 0.001) {
      const y = tapeCurve(x);
      expect(tapeCurve(-x)).toBe(-y);
      expect(Math.abs(y - Math.tanh(x))).toBeLessThan(0.025);
      expect(y).toBeGreaterThanOrEqual(prev);
      prev = y;
    }
  });

  it("THD of a 100 Hz sine at −12 dBFS grows monotonically with driveDb, and stays below −60 dB at driveDb 0 (DFT bins of harmonics 2–15)", () => {
    const drives = [0, 3, 6, 9, 12, 15, 18, 21, 24];
    const thd = drives.map((driveDb) => thdDb({ ...BASE, driveDb, bumpDb: 0, rolloffHz: null }));
    expect(thd[0]).toBeLessThan(-60);
    for (let i = 1; i < thd.length; i++) expect(thd[i], `${drives[i]} dB`).toBeGreaterThan(thd[i - 1] + 1);
    expect(thd[thd.length - 1]).toBeGreaterThan(-30); // pushed hard, it does crunch
  });

  it("driveDb changes character, not loudness: pink noise at −18 dBFS comes out within 0.5 dB of its level at driveDb 0, at every drive, 2× and 4×", () => {
    const x = pinkNoise(8 * FS, 3, -18);
    for (const oversample of [2, 4] as const) {
      const level = (driveDb: number) => rmsDb(runBlocks(new TapeStage(FS, 1, { ...BASE, driveDb, bumpDb: 0, rolloffHz: null, oversample }, 1000), [x], 1000)[0], FS);
      const ref = level(0);
      expect(Math.abs(ref - rmsDb(x, FS))).toBeLessThan(0.5);
      for (const driveDb of [3, 6, 12, 18, 24]) expect(Math.abs(level(driveDb) - ref), `${driveDb} dB at ${oversample}×`).toBeLessThan(0.5);
    }
  });

  it("aliasing at 4×: a 12 kHz sine at −12 dBFS driven 18 dB leaves nothing but itself above −90 dBFS (at 44.1 kHz, where the folded harmonics land between the tone's, not on it as at 48 kHz; Hann-windowed 64k FFT)", () => {
    const fs = 44100;
    const y = runBlocks(new TapeStage(fs, 1, { ...BASE, driveDb: 18, bumpDb: 0, rolloffHz: null, oversample: 4 }, 1000), [sine(2 * fs, 12000, 10 ** (-12 / 20), fs)], 1000)[0];
    const n = 65536, fft = new FFT(n), frame = new Float64Array(n), spec = fft.createComplexArray() as number[];
    let wsum = 0;
    for (let i = 0; i < n; i++) {
      const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
      frame[i] = w * y[fs / 2 + i];
      wsum += w;
    }
    fft.realTransform(spec, frame);
    let worst = -Infinity, harmonicPeak = -Infinity;
    for (let k = 1; k < n / 2; k++) {
      const hz = (k * fs) / n;
      const db = 20 * Math.log10((2 * Math.hypot(spec[2 * k], spec[2 * k + 1])) / wsum);
      // Within 20 Hz of 12 kHz: the tone and its window's skirt (its harmonics lie above the band).
      if (Math.abs(hz - 12000) < 20) harmonicPeak = Math.max(harmonicPeak, db);
      else worst = Math.max(worst, db);
    }
    expect(harmonicPeak).toBeGreaterThan(-20); // the tone is there…
    expect(worst).toBeLessThan(-90); // …and nothing that folded back
  });

  it("the emphasis around the curve is rate-dependent: the same peak level compresses a 10 kHz tone more than a 100 Hz one", () => {
    const s: TapeSettings = { ...BASE, driveDb: 18, bumpDb: 0, rolloffHz: null };
    const gain = (f: number) => toneDb(runBlocks(new TapeStage(FS, 1, s, 1000), [sine(FS, f, 0.5)], 1000)[0], 12000, 24000, f, FS) - toneDb(sine(FS, f, 0.5), 12000, 24000, f, FS);
    expect(gain(10000)).toBeLessThan(gain(100) - 1);
    expect(EMPHASIS_HZ).toBeGreaterThan(1000);
  });
});

describe("tape stage: structure", () => {
  it.each([2, 4] as const)("%d× equals its definition, bit for bit: Oversampler up, emphasis, curve, de-emphasis and mix at the high rate, down, then bump and loss (shorter than a flush interval)", (factor) => {
    const settings: TapeSettings = { driveDb: 12, bumpHz: 90, bumpDb: 2, rolloffHz: 12000, blend: 0.7, oversample: factor };
    const frames = FLUSH_INTERVAL_FRAMES - 6;
    const x = sine(frames, 3000, 0.6).map((v, i) => v + 0.3 * Math.sin(i * 0.05));
    const [y] = runBlocks(new TapeStage(FS, 1, settings, 50), [x], 50);
    const drive = curveDrive(settings.driveDb);
    const k = (factor * FS) / (2 * Math.PI * EMPHASIS_HZ);
    const wet = (settings.blend * wetCompensation(settings.driveDb)) / drive;
    const os = new Oversampler(factor, 1, frames);
    const high = os.up(0, x, frames);
    let up = 0, wp = 0;
    for (let i = 0; i < factor * frames; i++) {
      const m = drive * high[i];
      const w = (tapeCurve(m + k * (m - up)) + k * wp) * (1 / (1 + k));
      up = m;
      wp = w;
      high[i] = (1 - settings.blend) * high[i] + wet * w;
    }
    const ref = new Float64Array(frames);
    os.down(0, ref, frames);
    const bump = designBump(settings, FS)!, loss = designLoss(settings.rolloffHz, FS)!;
    let z1 = 0, z2 = 0, zl = 0;
    for (let i = 0; i < frames; i++) {
      const v = ref[i];
      const yb = bump.b0 * v + z1;
      z1 = bump.b1 * v - bump.a1 * yb + z2;
      z2 = bump.b2 * v - bump.a2 * yb;
      const yl = loss[0] * yb + zl;
      zl = loss[1] * yb - loss[2] * yl;
      ref[i] = yl;
    }
    for (let i = 0; i < frames; i++) expect(y[i]).toBe(ref[i]);
  });

  it.each([2, 4] as const)("%d×: the same output for any block size (1, 97, 1000 frames), stereo; deterministic; reset() returns to the first state; silence decays to exact zeros", (oversample) => {
    const g = gaussian(5);
    // The 80 Hz bump rings longest: its poles (radius ≈ 0.9956) take about 16,000 frames to fall by 600 dB.
    const x = [Float64Array.from({ length: 50000 }, (_, i) => (i < 8000 ? 0.3 * g() : 0)), sine(50000, 440, 0.5).map((v, i) => (i < 8000 ? v : 0))];
    const settings = { ...BASE, driveDb: 15, oversample };
    const proc = new TapeStage(FS, 2, settings, 1000);
    const ref = runBlocks(proc, x, 1000);
    for (const block of [1, 97]) {
      const y = runBlocks(new TapeStage(FS, 2, settings, block), x, block);
      for (let c = 0; c < 2; c++) expect(maxAbsDiff(y[c], ref[c])).toBe(0);
    }
    proc.reset();
    const again = runBlocks(proc, x, 1000);
    for (let c = 0; c < 2; c++) {
      expect(maxAbsDiff(again[c], ref[c])).toBe(0);
      expect(ref[c].subarray(40000).every((v) => v === 0)).toBe(true);
      expect(Math.max(...ref[c].subarray(8000, 8100).map(Math.abs))).toBeGreaterThan(1e-4);
    }
  });

  it("reports how hard the curve is hit: 20·log10(u / tapeCurve(u)) at the step's peak u = drive·peak", () => {
    const proc = new TapeStage(FS, 1, { ...BASE, driveDb: 18 }, 480);
    const out = new Float64Array(1);
    proc.process([sine(480, 100, 0.5)], 480);
    proc.takeGainReductionDb(out);
    const u = curveDrive(18) * Math.max(...sine(480, 100, 0.5));
    expect(out[0]).toBeCloseTo(20 * Math.log10(u / tapeCurve(u)), 12);
    proc.process([new Float64Array(480)], 480);
    proc.takeGainReductionDb(out);
    expect(out[0]).toBe(0);
  });
});

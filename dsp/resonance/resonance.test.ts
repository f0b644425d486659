import { describe, expect, it } from "vitest";
import { designBiquad } from "../filters/biquad-design.ts";
import { Biquad } from "../filters/biquad.ts";
import { pinkNoise, runBlocks, THIRD_OCTAVES_HZ, thirdOctaveLevelsDb } from "../test-signals.test-util.ts";
import { fftSizeFor, ResonanceTamer, THIRD_OCTAVE_CENTRES_HZ, thirdOctaveCutsDb, type ResonanceSettings } from "./resonance.ts";

const FS = 48000;
// The settings every measurement below uses: a 2 dB threshold, up to 12 dB of cut.
const SETTINGS: ResonanceSettings = { lowHz: 1000, highHz: 8000, thresholdDb: 2, maxCutDb: 12, attackMs: 20, releaseMs: 150, blend: 1, listen: "output" };

/** The output advanced by the stage's latency, so sample i lines up with input sample i. */
function compensated(proc: ResonanceTamer, x: Float64Array[], block: number): Float64Array[] {
  return runBlocks(proc, x, block).map((c) => c.slice(proc.latencyFrames));
}

function maxAbsDiff(a: Float64Array, b: Float64Array): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

/** Pink noise with a +15 dB, Q 8 cookbook peak at 3150 Hz switched in for the odd 2 s segments. */
function switchedResonance(seconds: number, seed: number): { input: Float64Array; onSegments: number[]; offSegments: number[] } {
  const dry = pinkNoise(seconds * FS, seed, -18);
  const peaked = dry.slice();
  new Biquad(designBiquad("peak", { freqHz: 3150, gainDb: 15, q: 8 }, FS), 1).process([peaked], peaked.length);
  const input = dry.map((v, i) => (Math.floor(i / (2 * FS)) % 2 === 1 ? peaked[i] : v));
  const onSegments: number[] = [], offSegments: number[] = [];
  for (let s = 0; s + 2 <= seconds - 1; s += 2) ((s / 2) % 2 === 1 ? onSegments : offSegments).push(s);
  return { input, onSegments, offSegments };
}

describe("resonance stage: frame and latency", () => {
  it("keeps its latency under 50 ms at every common rate", () => {
    for (const fs of [44100, 48000, 88200, 96000, 176400, 192000]) {
      expect(fftSizeFor(fs) / fs).toBeLessThan(0.05);
      expect(fftSizeFor(fs) / fs).toBeGreaterThan(0.02);
      expect(new ResonanceTamer(fs, 2, SETTINGS, 512).latencyFrames).toBe(fftSizeFor(fs));
    }
  });

  it("an impulse at frame n comes out at frame n after latency compensation (analytic: unit gains, √Hann·√Hann = Hann, its half-overlapped shifts sum to 1)", () => {
    for (const n of [0, 777, 5000]) {
      const x = new Float64Array(12000);
      x[n] = 1;
      const [y] = compensated(new ResonanceTamer(FS, 1, SETTINGS, 256), [x], 256);
      let peak = 0;
      for (let i = 0; i < y.length; i++) if (Math.abs(y[i]) > Math.abs(y[peak])) peak = i;
      expect(peak).toBe(n);
      expect(y[n]).toBeCloseTo(1, 12);
    }
  });

  it.each([
    ["maxCutDb 0", { maxCutDb: 0 }],
    ["blend 0", { blend: 0 }],
  ] as const)("with %s the stage is an identity after latency compensation: null below −120 dBFS on stereo pink noise (perfect-reconstruction condition of the √Hann pair at half overlap, analytic)", (_name, change) => {
    const x = [pinkNoise(3 * FS, 11, -10), pinkNoise(3 * FS, 12, -10)];
    const proc = new ResonanceTamer(FS, 2, { ...SETTINGS, ...change }, 480);
    const y = compensated(proc, x, 480);
    for (let c = 0; c < 2; c++) expect(20 * Math.log10(maxAbsDiff(y[c], x[c].subarray(0, y[c].length)))).toBeLessThan(-120);
  });
});

describe("resonance stage: what it cuts (third-octave levels after IEC 61260-1, from FFT power spectra)", () => {
  it("on pink noise without a resonance, every third-octave level moves less than 0.2 dB", () => {
    const x = pinkNoise(20 * FS, 5, -18);
    const proc = new ResonanceTamer(FS, 1, SETTINGS, 512);
    const [y] = compensated(proc, [x], 512);
    const before = thirdOctaveLevelsDb(x, FS, FS, y.length);
    const after = thirdOctaveLevelsDb(y, FS, FS, y.length);
    for (let b = 0; b < before.length; b++) expect(Math.abs(after[b] - before[b]), `${THIRD_OCTAVES_HZ[b].toFixed(0)} Hz`).toBeLessThan(0.2);
  });

  it("a +15 dB, Q 8 resonance at 3150 Hz (RBJ cookbook peaking filter) switched on and off every 2 s over pink noise: cut by at least 6 dB in its band while on, moved less than 0.5 dB while off; bands outside lowHz–highHz move less than 0.2 dB", () => {
    const { input, onSegments, offSegments } = switchedResonance(20, 7);
    const proc = new ResonanceTamer(FS, 1, SETTINGS, 512);
    const [y] = compensated(proc, [input], 512);
    const band = THIRD_OCTAVES_HZ.findIndex((f) => Math.abs(f - 3150) < 50);
    // From 0.5 s into each segment (the attack and release have settled) to its end.
    const change = (s: number) => {
      const from = (s + 0.5) * FS, to = (s + 2) * FS;
      const a = thirdOctaveLevelsDb(input, FS, from, to), b = thirdOctaveLevelsDb(y, FS, from, to);
      return a.map((v, i) => b[i] - v);
    };
    for (const s of onSegments) {
      const d = change(s);
      expect(d[band], `on at ${s} s`).toBeLessThanOrEqual(-6);
      THIRD_OCTAVES_HZ.forEach((f, i) => {
        // Outside the focus range (with a third of an octave for the band's own width).
        if (f < SETTINGS.lowHz / 2 ** (1 / 3) || f > SETTINGS.highHz * 2 ** (1 / 3)) expect(Math.abs(d[i]), `${f.toFixed(0)} Hz at ${s} s`).toBeLessThan(0.2);
      });
    }
    for (const s of offSegments) expect(Math.abs(change(s)[band]), `off at ${s} s`).toBeLessThan(0.5);
  });

  it("nothing outside lowHz–highHz moves more than 0.2 dB even with the deepest settings (a focus of 2–4 kHz on pink noise with the resonance)", () => {
    const { input } = switchedResonance(10, 9);
    const proc = new ResonanceTamer(FS, 1, { ...SETTINGS, lowHz: 2000, highHz: 4000, thresholdDb: 0, maxCutDb: 24 }, 512);
    const [y] = compensated(proc, [input], 512);
    const a = thirdOctaveLevelsDb(input, FS, FS, y.length), b = thirdOctaveLevelsDb(y, FS, FS, y.length);
    THIRD_OCTAVES_HZ.forEach((f, i) => {
      const lowerEdge = f * 2 ** (1 / 6), upperEdge = f / 2 ** (1 / 6);
      if (lowerEdge < 2000 / 1.1 || upperEdge > 4000 * 1.1) expect(Math.abs(b[i] - a[i]), `${f.toFixed(0)} Hz`).toBeLessThan(0.2);
    });
    // …and inside it does cut.
    expect(b[THIRD_OCTAVES_HZ.findIndex((f) => Math.abs(f - 3150) < 50)] - a[THIRD_OCTAVES_HZ.findIndex((f) => Math.abs(f - 3150) < 50)]).toBeLessThan(-3);
  });

  it('listen "removed" is exactly what "output" takes away: the two sum to the delayed input (linearity of the STFT, analytic)', () => {
    const { input } = switchedResonance(6, 3);
    const out = compensated(new ResonanceTamer(FS, 1, SETTINGS, 512), [input], 512)[0];
    const removed = compensated(new ResonanceTamer(FS, 1, { ...SETTINGS, listen: "removed" }, 512), [input], 512)[0];
    let worst = 0, removedPower = 0;
    for (let i = 0; i < out.length; i++) {
      worst = Math.max(worst, Math.abs(out[i] + removed[i] - input[i]));
      removedPower += removed[i] ** 2;
    }
    expect(20 * Math.log10(worst)).toBeLessThan(-120);
    expect(removedPower).toBeGreaterThan(0);
  });

  it("blend scales the cut: at 0.5 the deepest cut is the dB of 1 − (1 − g)/2", () => {
    const { input } = switchedResonance(4, 3);
    const full = new ResonanceTamer(FS, 1, SETTINGS, 512);
    const half = new ResonanceTamer(FS, 1, { ...SETTINGS, blend: 0.5 }, 512);
    runBlocks(full, [input], 512);
    runBlocks(half, [input], 512);
    const k = full.cutDb.indexOf(Math.max(...full.cutDb));
    const g = 10 ** (-full.cutDb[k] / 20);
    expect(half.cutDb[k]).toBeCloseTo(-20 * Math.log10(1 - 0.5 * (1 - g)), 9);
  });
});

describe("resonance stage: reports", () => {
  it("reports its deepest cut per step (never above maxCutDb) and, for the desk, the deepest cut per third-octave band", () => {
    const { input } = switchedResonance(6, 13);
    const proc = new ResonanceTamer(FS, 1, { ...SETTINGS, maxCutDb: 8 }, 480);
    const out = new Float64Array(1);
    const steps: number[] = [];
    const y = input.slice();
    for (let off = 0; off + 480 <= y.length; off += 480) {
      proc.process([y.subarray(off, off + 480)], 480);
      proc.takeGainReductionDb(out);
      steps.push(out[0]);
    }
    const onStep = (s: number) => steps[Math.round((s * FS + proc.latencyFrames) / 480)];
    expect(Math.max(...steps)).toBeLessThanOrEqual(8 + 1e-9);
    expect(onStep(3.5)).toBeGreaterThan(6); // in the "on" segment
    // The desk's bands, after the "on" segment ended at 4 s (the stage still holds the frame before).
    const bands = new Float64Array(THIRD_OCTAVE_CENTRES_HZ.length);
    const mid = new ResonanceTamer(FS, 1, { ...SETTINGS, maxCutDb: 8 }, 480);
    runBlocks(mid, [input.subarray(0, Math.round(3.5 * FS))], 480);
    mid.bandCutsDb(bands);
    const b3150 = THIRD_OCTAVE_CENTRES_HZ.findIndex((f) => Math.abs(f - 3150) < 50);
    expect(bands[b3150]).toBeGreaterThan(6);
    THIRD_OCTAVE_CENTRES_HZ.forEach((f, b) => {
      if (f < 900 || f > 9000) expect(bands[b]).toBe(0);
    });
  });

  it("band cuts: the deepest per-bin cut inside each band's edges fm·2^(±1/6) (IEC 61260-1 base-2 bands)", () => {
    const binHz = 10;
    const cut = new Float64Array(2001);
    cut[Math.round(1000 / binHz)] = 3; // 1 kHz: the 1000 Hz band (891–1122 Hz)
    cut[Math.round(1130 / binHz)] = 5; // just above 1122 Hz: the 1260 Hz band
    const out = new Float64Array(THIRD_OCTAVE_CENTRES_HZ.length);
    thirdOctaveCutsDb(cut, binHz, out);
    const i1000 = THIRD_OCTAVE_CENTRES_HZ.indexOf(1000);
    expect(out[i1000]).toBe(3);
    expect(out[i1000 + 1]).toBe(5);
    expect(out.reduce((a, b) => a + b, 0)).toBe(8);
  });
});

describe("resonance stage: as every stage", () => {
  it("gives the same output for any block size (blocks of 1, 97, 480 and 4096 frames), stereo", () => {
    const { input } = switchedResonance(3, 21);
    const x = [input, input.map((v, i) => 0.5 * v + 0.1 * Math.sin(i / 7))];
    const ref = runBlocks(new ResonanceTamer(FS, 2, SETTINGS, 4096), x, 4096);
    for (const block of [1, 97, 480]) {
      const y = runBlocks(new ResonanceTamer(FS, 2, SETTINGS, block), x, block);
      for (let c = 0; c < 2; c++) expect(maxAbsDiff(y[c], ref[c])).toBe(0);
    }
  });

  it("is deterministic, and reset() returns it to its first state", () => {
    const { input } = switchedResonance(3, 22);
    const proc = new ResonanceTamer(FS, 1, SETTINGS, 512);
    const a = runBlocks(proc, [input], 512)[0];
    proc.reset();
    const b = runBlocks(proc, [input], 512)[0];
    const c = runBlocks(new ResonanceTamer(FS, 1, SETTINGS, 512), [input], 512)[0];
    expect(maxAbsDiff(a, b)).toBe(0);
    expect(maxAbsDiff(a, c)).toBe(0);
  });

  it("links the channels: a resonance in the left channel only is cut in both by the same gains", () => {
    const { input } = switchedResonance(4, 23);
    const other = pinkNoise(4 * FS, 24, -18);
    const proc = new ResonanceTamer(FS, 2, SETTINGS, 512);
    const [, right] = compensated(proc, [input, other], 512);
    const from = 2.5 * FS, to = 4 * FS - proc.latencyFrames;
    const band = THIRD_OCTAVES_HZ.findIndex((f) => Math.abs(f - 3150) < 50);
    expect(thirdOctaveLevelsDb(right, FS, from, to)[band] - thirdOctaveLevelsDb(other, FS, from, to)[band]).toBeLessThan(-1);
  });
});

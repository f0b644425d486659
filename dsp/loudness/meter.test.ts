// Loudness meter against EBU Tech 3341 (loudness, momentary, short-term),
// EBU Tech 3342 (loudness range) and ITU-R BS.1770-4, with `ebur128-wasm` as
// a second opinion. The Tech 3341/3342 case definitions below are from
// memory; the expected values follow from them.
import { describe, expect, it } from "vitest";
import { createGaussian, fade, mixedSignal, sine, steppedSine, whiteNoise } from "../testing/signals.ts";
import { referenceIntegratedLufs, referenceTruePeakDbtp } from "../testing/ebur128-reference.ts";
import { type LoudnessAnalysis, LoudnessMeter, type MeterOptions } from "./meter.ts";

function measure(x: Float64Array[], fs: number, options: MeterOptions = { truePeak: false }, block = 4096): LoudnessAnalysis {
  const m = new LoudnessMeter(fs, x.length, options);
  for (let s = 0; s < x[0].length; s += block) {
    const n = Math.min(block, x[0].length - s);
    m.process(x.map((c) => c.subarray(s, s + n)), n);
  }
  return m.result();
}
const stereo = (x: Float64Array) => [x, x];
const within = (value: number, expected: number, tol: number) => expect(Math.abs(value - expected)).toBeLessThanOrEqual(tol);

describe("EBU Tech 3341 (from memory), stereo 1 kHz sines, ±0.1 LU", () => {
  const fs = 48000;
  it("case 1: −23 dBFS for 20 s → M, S, I = −23.0 LUFS", () => {
    const r = measure(stereo(sine(20 * fs, 1000, fs, -23)), fs);
    within(r.integratedLufs, -23, 0.1);
    within(r.maxMomentaryLufs, -23, 0.1);
    within(r.maxShortTermLufs, -23, 0.1);
    within(r.shortTermLufs[1000], -23, 0.1);
  });

  it("case 2: −33 dBFS for 20 s → −33.0 LUFS", () => {
    within(measure(stereo(sine(20 * fs, 1000, fs, -33)), fs).integratedLufs, -33, 0.1);
  });

  it("case 3: −36 / −23 / −36 dBFS for 10 / 60 / 10 s → I = −23.0 (relative gate)", () => {
    within(measure(stereo(steppedSine([[10, -36], [60, -23], [10, -36]], 1000, fs)), fs).integratedLufs, -23, 0.1);
  });

  it("case 4: −72 / −36 / −23 / −36 / −72 dBFS for 10 / 10 / 60 / 10 / 10 s → I = −23.0 (both gates)", () => {
    const x = steppedSine([[10, -72], [10, -36], [60, -23], [10, -36], [10, -72]], 1000, fs);
    within(measure(stereo(x), fs).integratedLufs, -23, 0.1);
  });

  it("case 5: −26 / −20 / −26 dBFS for 20 / 20.1 / 20 s → I = −23.0", () => {
    within(measure(stereo(steppedSine([[20, -26], [20.1, -20], [20, -26]], 1000, fs)), fs).integratedLufs, -23, 0.1);
  });

  it("short-term: 1.34 s at −20 dBFS and 1.66 s at −30 dBFS, five times → S = −23.0 once 3 s have passed", () => {
    const segs: Array<[number, number]> = [];
    for (let i = 0; i < 5; i++) segs.push([1.34, -20], [1.66, -30]);
    const r = measure(stereo(steppedSine(segs, 1000, fs)), fs);
    for (let j = 300; j < r.shortTermLufs.length; j += 7) within(r.shortTermLufs[j - 1], -23, 0.1);
  });

  it("momentary: a 0.4 s burst at −23 dBFS reads −23.0; a 0.2 s burst at −20 dBFS reads −23.0 (half a window)", () => {
    const silence = (s: number): [number, number] => [s, -400];
    within(measure(stereo(steppedSine([silence(1), [0.4, -23], silence(1)], 1000, fs)), fs).maxMomentaryLufs, -23, 0.1);
    within(measure(stereo(steppedSine([silence(1), [0.2, -20], silence(1)], 1000, fs)), fs).maxMomentaryLufs, -23, 0.1);
    // Short-term likewise over 3 s: 1.5 s at −20 dBFS reads −23.0.
    within(measure(stereo(steppedSine([silence(1), [1.5, -20], silence(4)], 1000, fs)), fs).maxShortTermLufs, -23, 0.1);
  });
});

describe("ITU-R BS.1770-4 details", () => {
  it("mono: channel weight 1.0 — a 997 Hz sine at 0 dBFS reads −3.01 LUFS", () => {
    within(measure([sine(10 * 48000, 997, 48000, 0)], 48000).integratedLufs, -3.01, 0.01);
  });

  it("44.1, 96 and 192 kHz read the same as 48 kHz (1 kHz stereo sine at −18 dBFS)", () => {
    for (const fs of [44100, 96000, 192000]) within(measure(stereo(sine(5 * fs, 1000, fs, -18)), fs).integratedLufs, -18, 0.02);
  });

  it("silence: −Infinity levels, empty-window curve, no NaN", () => {
    const r = measure([new Float64Array(48000), new Float64Array(48000)], 48000, { truePeak: true });
    expect(r.integratedLufs).toBe(-Infinity);
    expect(r.maxMomentaryLufs).toBe(-Infinity);
    expect(r.samplePeakDbfs).toBe(-Infinity);
    expect(r.truePeakDbtp).toBe(-Infinity);
    expect(r.loudnessRangeLu).toBe(0);
    expect(r.correlation).toBe(0);
    expect(r.shortTermLufs.length).toBe(100);
    expect(r.shortTermLufs.every((v) => v === -Infinity)).toBe(true);
  });

  it("truePeak: false reports NaN true peak and still measures the rest", () => {
    const r = measure(stereo(sine(48000, 1000, 48000, -6)), 48000, { truePeak: false });
    expect(r.truePeakDbtp).toBeNaN();
    within(r.samplePeakDbfs, -6, 1e-6);
  });

  it("correlation: Σ LR / sqrt(ΣL² ΣR²) — same 1, inverted −1, independent ≈ 0, mono 1", () => {
    const a = whiteNoise(48000, 1);
    const b = whiteNoise(48000, 2);
    expect(measure([a, a], 48000).correlation).toBeCloseTo(1, 12);
    expect(measure([a, a.map((v) => -v)], 48000).correlation).toBeCloseTo(-1, 12);
    expect(Math.abs(measure([a, b], 48000).correlation)).toBeLessThan(0.02);
    expect(measure([a], 48000).correlation).toBe(1);
    // Half-correlated: L = a, R = a + b (equal powers) → 1/√2.
    expect(measure([a, a.map((v, i) => v + b[i])], 48000).correlation).toBeCloseTo(Math.SQRT1_2, 1);
  });

  it("gridMs sets the short-term curve's step", () => {
    const r = measure(stereo(sine(48000 * 2, 1000, 48000, -20)), 48000, { gridMs: 50 });
    expect(r.gridMs).toBe(50);
    expect(r.shortTermLufs.length).toBe(40);
    expect(() => new LoudnessMeter(48000, 2, { gridMs: 30 })).toThrow(RangeError);
  });
});

describe("EBU Tech 3342 loudness range (cases from memory), ±1 LU", () => {
  const fs = 48000;
  const cases: Array<[string, Array<[number, number]>, number]> = [
    ["case 1: 20 s at −20 dBFS, 20 s at −30 dBFS → 10 LU", [[20, -20], [20, -30]], 10],
    ["case 2: −20 / −15 dBFS → 5 LU", [[20, -20], [20, -15]], 5],
    ["case 3: −40 / −20 dBFS → 20 LU", [[20, -40], [20, -20]], 20],
    ["case 4: −50 / −35 / −20 / −35 / −50 dBFS, 20 s each → 15 LU", [[20, -50], [20, -35], [20, -20], [20, -35], [20, -50]], 15],
  ];
  for (const [name, segs, lra] of cases) {
    it(name, () => within(measure(stereo(steppedSine(segs, 1000, fs)), fs).loudnessRangeLu, lra, 1));
  }
});

describe("second opinion: ebur128-wasm, within 0.1 LU / 0.1 dB", () => {
  const signals = (fs: number): Array<[string, Float64Array[]]> => {
    const g = createGaussian(9);
    const pinkish = new Float64Array(8 * fs);
    let lp = 0;
    for (let i = 0; i < pinkish.length; i++) pinkish[i] = (lp = 0.9 * lp + 0.1 * g()) * 0.9;
    return [
      ["uniform noise stereo", [whiteNoise(8 * fs, 31, 0.5), whiteNoise(8 * fs, 32, 0.3)]],
      ["mixed signal stereo", [mixedSignal(12 * fs, fs, 33), mixedSignal(12 * fs, fs, 34, -3)]],
      ["filtered gaussian noise mono", [fade(pinkish, fs / 10)]],
    ];
  };
  for (const fs of [44100, 48000, 96000]) {
    it(`integrated loudness and true peak at ${fs} Hz`, () => {
      for (const [, x] of signals(fs)) {
        const ours = measure(x, fs, { truePeak: true });
        const f32 = x.map((c) => Float32Array.from(c));
        const oursF32 = measure(f32.map((c) => Float64Array.from(c)), fs, { truePeak: true });
        within(ours.integratedLufs, referenceIntegratedLufs(fs, f32), 0.1);
        within(oursF32.truePeakDbtp, referenceTruePeakDbtp(fs, f32), 0.1);
      }
    });
  }
});

describe("determinism", () => {
  it("blocks of 1, 137 and 4096 frames give identical numbers", () => {
    const fs = 44100;
    const x = [mixedSignal(4 * fs, fs, 41), mixedSignal(4 * fs, fs, 42)];
    const a = measure(x, fs, { truePeak: true }, 4096);
    expect(measure(x, fs, { truePeak: true }, 137)).toEqual(a);
    expect(measure(x, fs, { truePeak: true }, 1)).toEqual(a);
    expect(measure(x, fs, { truePeak: true }, 4096)).toEqual(a);
    expect(Number.isFinite(a.integratedLufs)).toBe(true);
  });

  it("reset starts over", () => {
    const x = stereo(whiteNoise(48000, 5, 0.2));
    const m = new LoudnessMeter(48000, 2);
    m.process([whiteNoise(48000, 6), whiteNoise(48000, 7)], 48000);
    m.reset();
    m.process(x, 48000);
    expect(m.result()).toEqual(measure(x, 48000, {}));
  });
});

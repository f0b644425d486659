// Third-octave spectrum against analytic references: band edges and midband
// frequencies of IEC 61260-1:2014 (base-ten system), levels re a full-scale
// sine (AES17), pink noise's equal power per band and white noise's power
// proportional to bandwidth (1 dB per band in the base-ten system: the band
// width ratio is exactly 10^(1/10)).
import { describe, expect, it } from "vitest";
import { createGaussian, pinkNoise, sine } from "../../bench/signals.ts";
import { LoudnessMeter } from "../loudness/meter.ts";
import { Fft } from "./fft.ts";
import { bandEdgesHz, bandMidHz, THIRD_OCTAVE_NOMINAL_HZ, type ThirdOctaveBand, ThirdOctaveAnalyzer } from "./third-octave.ts";

function spectrum(x: Float64Array[], fs: number, block = 4096): ThirdOctaveBand[] {
  const a = new ThirdOctaveAnalyzer(fs, x.length);
  for (let s = 0; s < x[0].length; s += block) {
    const n = Math.min(block, x[0].length - s);
    a.process(x.map((c) => c.subarray(s, s + n)), n);
  }
  return a.result();
}
const BANDS = THIRD_OCTAVE_NOMINAL_HZ.length;

describe("bands (IEC 61260-1, base ten)", () => {
  it("30 bands, 25 Hz to 20 kHz; exact midbands within 2 % of the nominal labels; edges at f_m·10^(±1/20) meet", () => {
    expect(BANDS).toBe(30);
    for (let i = 0; i < BANDS; i++) {
      expect(Math.abs(bandMidHz(i) / THIRD_OCTAVE_NOMINAL_HZ[i] - 1)).toBeLessThan(0.02);
      if (i > 0) expect(bandEdgesHz(i)[0]).toBeCloseTo(bandEdgesHz(i - 1)[1], 9);
    }
    expect(bandMidHz(16)).toBe(1000);
    expect(bandEdgesHz(16)[0]).toBeCloseTo(891.25, 2);
    expect(bandEdgesHz(16)[1]).toBeCloseTo(1122.02, 2);
  });
});

describe("FFT", () => {
  it("matches the direct DFT sum (analytic definition) within 1e-10", () => {
    const n = 64;
    const g = createGaussian(5);
    const x = Array.from({ length: n }, () => [g(), g()]);
    const re = Float64Array.from(x, (v) => v[0]);
    const im = Float64Array.from(x, (v) => v[1]);
    new Fft(n).transform(re, im);
    for (let k = 0; k < n; k++) {
      let sr = 0, si = 0;
      for (let t = 0; t < n; t++) {
        const a = (-2 * Math.PI * k * t) / n;
        sr += x[t][0] * Math.cos(a) - x[t][1] * Math.sin(a);
        si += x[t][0] * Math.sin(a) + x[t][1] * Math.cos(a);
      }
      expect(Math.hypot(sr - re[k], si - im[k])).toBeLessThan(1e-10);
    }
  });
});

describe("sine at each band's midband frequency, −20 dBFS (AES17: full-scale sine = 0 dB)", () => {
  for (const fs of [48000, 44100]) {
    it(`${fs} Hz stereo: −20.0 ± 0.2 dB in its band, ≥ 25 dB lower two bands away`, () => {
      for (let i = 0; i < BANDS; i++) {
        const x = sine(4 * fs, bandMidHz(i), fs, -20);
        const r = spectrum([x, x], fs);
        expect(r[i].centreHz).toBe(THIRD_OCTAVE_NOMINAL_HZ[i]);
        expect(Math.abs(r[i].levelDb + 20), `${r[i].centreHz} Hz reads ${r[i].levelDb}`).toBeLessThanOrEqual(0.2);
        for (const j of [i - 2, i + 2]) {
          if (j < 0 || j >= BANDS) continue;
          expect(r[j].levelDb, `${r[i].centreHz} Hz sine in the ${r[j].centreHz} Hz band`).toBeLessThanOrEqual(-45);
        }
      }
    });
  }

  it("mono reads as stereo with the same signal in both channels", () => {
    const fs = 48000;
    const x = sine(2 * fs, 1000, fs, -20);
    const mono = spectrum([x], fs);
    const stereo = spectrum([x, x], fs);
    for (let i = 0; i < BANDS; i++) {
      if (stereo[i].levelDb > -100) expect(mono[i].levelDb).toBeCloseTo(stereo[i].levelDb, 6);
    }
  });

  it("a file shorter than one window (0.2 s) still reads its sine within 0.5 dB", () => {
    const fs = 48000;
    const x = sine(fs / 5, 1000, fs, -20);
    expect(Math.abs(spectrum([x, x], fs)[16].levelDb + 20)).toBeLessThan(0.5);
  });

  it("a tone just above the decimator's 6 kHz null folds into the low bands at least 40 dB down (the stated limit)", () => {
    const fs = 48000;
    const x = sine(4 * fs, 6150, fs, -20);
    const r = spectrum([x, x], fs);
    for (let i = 0; i < 13; i++) expect(r[i].levelDb).toBeLessThan(-60);
  });
});

describe("noise, 60 s, fixed seeds", () => {
  it("pink noise (Kellet's refined filter, 44.1 kHz) reads flat within ±0.75 dB from 31.5 Hz to 16 kHz", () => {
    const fs = 44100;
    const r = spectrum([pinkNoise(60 * fs, 7, 2)], fs);
    const levels = r.slice(1, 29).map((b) => b.levelDb); // 31.5 Hz … 16 kHz
    const mean = levels.reduce((a, b) => a + b) / levels.length;
    for (const [k, l] of levels.entries()) expect(Math.abs(l - mean), `${r[k + 1].centreHz} Hz`).toBeLessThanOrEqual(0.75);
  });

  it("white noise rises 1 dB per band (3 dB per octave) within ±0.75 dB, 25 Hz to 20 kHz, stereo 48 kHz", () => {
    const fs = 48000;
    const gl = createGaussian(11), gr = createGaussian(12);
    const l = new Float64Array(60 * fs).map(() => 0.1 * gl());
    const rr = new Float64Array(60 * fs).map(() => 0.1 * gr());
    const r = spectrum([l, rr], fs);
    const detrended = r.map((b, i) => b.levelDb - i);
    const mean = detrended.reduce((a, b) => a + b) / detrended.length;
    for (const [i, d] of detrended.entries()) expect(Math.abs(d - mean), `${r[i].centreHz} Hz`).toBeLessThanOrEqual(0.75);
    // Absolute level: Gaussian noise of σ = 0.1 has mean square 0.01, i.e. −17.0 dB re a full-scale sine over the
    // whole band 0–24 kHz; the 1 kHz band holds 224.8 Hz of it: −17.0 + 10·log10(224.8 / 24000) = −37.3 dB.
    expect(Math.abs(r[16].levelDb - (10 * Math.log10(2 * 0.01) + 10 * Math.log10(224.77 / 24000)))).toBeLessThan(0.5);
  });
});

describe("streaming", () => {
  it("blocks of 1, 137 and 4096 frames give identical bands", () => {
    const fs = 48000;
    const g = createGaussian(21);
    const x = [new Float64Array(2 * fs).map(() => g()), new Float64Array(2 * fs).map(() => g())];
    const a = spectrum(x, fs, 4096);
    expect(spectrum(x, fs, 137)).toEqual(a);
    expect(spectrum(x, fs, 1)).toEqual(a);
  });

  it("the meter carries the spectrum only when asked, in the same pass", () => {
    const fs = 48000;
    const x = sine(2 * fs, 1000, fs, -20);
    const without = new LoudnessMeter(fs, 2, { truePeak: false });
    const withS = new LoudnessMeter(fs, 2, { truePeak: false, spectrum: true });
    without.process([x, x], x.length);
    withS.process([x, x], x.length);
    expect(without.result().thirdOctave).toBeUndefined();
    expect(Math.abs(withS.result().thirdOctave![16].levelDb + 20)).toBeLessThan(0.2);
    expect(withS.result().integratedLufs).toBe(without.result().integratedLufs);
  });

  it("silence reads −Infinity in every band", () => {
    const fs = 48000;
    const z = new Float64Array(fs);
    expect(spectrum([z, z], fs).every((b) => b.levelDb === -Infinity)).toBe(true);
  });
});

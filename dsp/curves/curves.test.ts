// The desk's curves against the outside world: the EQ's drawn response
// against the analogue prototypes of the RBJ Audio EQ Cookbook mapped by the
// bilinear transform (analytic, not from our coefficients), the crossover
// bands against the LR4 identity (−6.02 dB at the crossover, analytic) and
// against the band splitter's own impulse responses, and the compressor
// curve against the textbook hard and soft knee.
import { describe, expect, it } from "vitest";
import { BandSplitter } from "../filters/crossover.ts";
import type { EqBand } from "../chain/schema.ts";
import { eqResponse, logFrequencies } from "./eq-response.ts";
import { crossoverBandsDb } from "./crossover-bands.ts";
import { operatingPoint, staticOutputDb } from "./compressor-curve.ts";

/**
 * |H(jΩ)|² of the cookbook's analogue prototypes (RBJ Audio EQ Cookbook, W3C
 * note, "the analog prototypes"), with s = jΩ and Ω normalised to the band's
 * frequency. The cookbook's digital filters are these through the bilinear
 * transform prewarped at f0, so the digital response at f is the prototype's
 * at Ω = tan(πf/fs) / tan(πf0/fs).
 */
function cookbookDb(band: Pick<EqBand, "shape" | "freqHz" | "gainDb" | "q">, f: number, fs: number): number {
  const W = Math.tan((Math.PI * f) / fs) / Math.tan((Math.PI * band.freqHz) / fs);
  const A = 10 ** (band.gainDb / 40);
  const Q = band.q;
  // |a + bΩ j + c(jΩ)²|² for a quadratic a + b s + c s².
  const quad = (a: number, b: number, c: number) => (a - c * W * W) ** 2 + (b * W) ** 2;
  let power: number;
  switch (band.shape) {
    case "peak": // (s² + s·A/Q + 1) / (s² + s/(A·Q) + 1)
      power = quad(1, A / Q, 1) / quad(1, 1 / (A * Q), 1);
      break;
    case "lowShelf": // A·(s² + (√A/Q)s + A) / (A·s² + (√A/Q)s + 1)
      power = (A * A * quad(A, Math.sqrt(A) / Q, 1)) / quad(1, Math.sqrt(A) / Q, A);
      break;
    case "highShelf": // A·(A·s² + (√A/Q)s + 1) / (s² + (√A/Q)s + A)
      power = (A * A * quad(1, Math.sqrt(A) / Q, A)) / quad(A, Math.sqrt(A) / Q, 1);
      break;
    case "lowPass": // 1 / (s² + s/Q + 1)
      power = 1 / quad(1, 1 / Q, 1);
      break;
    case "highPass": // s² / (s² + s/Q + 1)
      power = W ** 4 / quad(1, 1 / Q, 1);
      break;
    case "notch": // (s² + 1) / (s² + s/Q + 1)
      power = quad(1, 0, 1) / quad(1, 1 / Q, 1);
      break;
  }
  return 10 * Math.log10(power);
}

const BANDS: EqBand[] = [
  { shape: "highPass", freqHz: 28, gainDb: 0, q: 0.707, channel: "stereo" },
  { shape: "lowShelf", freqHz: 110, gainDb: 2.5, q: 0.8, channel: "stereo" },
  { shape: "peak", freqHz: 420, gainDb: -3.5, q: 1.4, channel: "stereo" },
  { shape: "peak", freqHz: 3150, gainDb: 4, q: 2.2, channel: "mid" },
  { shape: "highShelf", freqHz: 8000, gainDb: -2, q: 0.7, channel: "side" },
  { shape: "lowPass", freqHz: 19000, gainDb: 0, q: 0.9, channel: "stereo" },
  { shape: "notch", freqHz: 5000, gainDb: 0, q: 8, channel: "left" },
];
const TEN_FREQS = [20, 63, 110, 250, 420, 1000, 3150, 6000, 8000, 16000];

describe("EQ curve against the RBJ cookbook's analytic response (0.01 dB)", () => {
  for (const fs of [44100, 48000, 96000]) {
    it(`sums the bands per channel mode at 10 frequencies, ${fs} Hz`, () => {
      const curves = eqResponse(BANDS, fs, TEN_FREQS);
      expect(curves.map((c) => c.mode)).toEqual(["stereo", "mid", "side", "left"]);
      for (const curve of curves) {
        const acting = BANDS.filter((b) => b.channel === "stereo" || b.channel === curve.mode);
        TEN_FREQS.forEach((f, i) => {
          const analytic = acting.reduce((sum, b) => sum + cookbookDb(b, f, fs), 0);
          expect(Math.abs(curve.magnitudeDb[i] - analytic)).toBeLessThan(0.01);
        });
      }
    });
  }

  it("a peak's drawn gain at its own frequency is its gain (cookbook: |H(f0)| = A²)", () => {
    const [curve] = eqResponse([{ shape: "peak", freqHz: 1000, gainDb: 6, q: 1, channel: "stereo" }], 48000, [1000]);
    expect(curve.magnitudeDb[0]).toBeCloseTo(6, 9);
  });

  it("spaces the frequency axis evenly in octaves", () => {
    const f = logFrequencies(20, 20480, 11);
    for (let i = 0; i < 11; i++) expect(f[i]).toBeCloseTo(20 * 2 ** i, 6);
  });
});

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

describe("crossover bands (Linkwitz-Riley 4th order)", () => {
  it("each side of one crossover is −6.02 dB at the crossover frequency (LR4 = Butterworth², 20·log10(1/2), analytic)", () => {
    for (const fs of [44100, 48000, 96000]) {
      for (const fc of [90, 1000, 3000, 12000]) {
        const [low, high] = crossoverBandsDb([fc], fs, [fc]);
        expect(low[0]).toBeCloseTo(20 * Math.log10(0.5), 3);
        expect(high[0]).toBeCloseTo(20 * Math.log10(0.5), 3);
      }
    }
  });

  it("every band of a four-band split against the analytic LR4 products of its path (0.001 dB)", () => {
    // Butterworth 2nd order through the bilinear transform prewarped at fc:
    // |LP|² = 1/(1 + Ω⁴), |HP|² = Ω⁴/(1 + Ω⁴), Ω = tan(πf/fs)/tan(πfc/fs); LR4 squares them.
    const lr4 = (side: "low" | "high", f: number, fc: number, fs: number) => {
      const w4 = (Math.tan((Math.PI * f) / fs) / Math.tan((Math.PI * fc) / fs)) ** 4;
      return 20 * Math.log10(side === "low" ? 1 / (1 + w4) : w4 / (1 + w4));
    };
    for (const fs of [44100, 48000, 96000]) {
      const [x0, x1, x2] = [90, 1000, 3000];
      const freqs = [30, 90, 400, 1000, 2000, 3000, 9000];
      const bands = crossoverBandsDb([x0, x1, x2], fs, freqs);
      // The splitter's tree: 1 kHz first, then 90 Hz below it and 3 kHz above it.
      const expected = [
        (f: number) => lr4("low", f, x1, fs) + lr4("low", f, x0, fs),
        (f: number) => lr4("low", f, x1, fs) + lr4("high", f, x0, fs),
        (f: number) => lr4("high", f, x1, fs) + lr4("low", f, x2, fs),
        (f: number) => lr4("high", f, x1, fs) + lr4("high", f, x2, fs),
      ];
      expected.forEach((model, b) => freqs.forEach((f, i) => expect(Math.abs(bands[b][i] - model(f))).toBeLessThan(0.001)));
      // The split itself: −6.02 dB on both sides of the first crossover.
      expect(bands[1][3]).toBeCloseTo(-6.0206 + lr4("high", x1, x0, fs), 3);
    }
  });

  it("draws what the band splitter does: each band's impulse response matches within 0.01 dB", () => {
    const fs = 48000;
    const frames = fs;
    const xs = [90, 1000, 3000];
    const splitter = new BandSplitter(fs, 1, xs, frames);
    const impulse = new Float64Array(frames);
    impulse[0] = 1;
    splitter.split([impulse], frames);
    const freqs = [40, 90, 300, 1000, 2000, 3000, 8000];
    const drawn = crossoverBandsDb(xs, fs, freqs);
    for (let b = 0; b < 4; b++) {
      freqs.forEach((f, i) => {
        if (drawn[b][i] < -60) return; // deep in the stop band the DFT of a finite response is no reference
        expect(Math.abs(dftMagnitudeDb(splitter.bands[b][0], f, fs) - drawn[b][i])).toBeLessThan(0.01);
      });
    }
  });
});

describe("compressor static curve (textbook hard and soft knee, analytic)", () => {
  const s = { thresholdDb: -20, ratio: 4, kneeDb: 6, makeupDb: 2 };
  it("is the input plus makeup below the knee and threshold + over/ratio + makeup above it", () => {
    expect(staticOutputDb(-40, s)).toBeCloseTo(-38, 12);
    expect(staticOutputDb(-8, s)).toBeCloseTo(-20 + 12 / 4 + 2, 12);
    // In the knee's middle (at the threshold) the quadratic knee reduces by (1 − 1/R)·W/8.
    expect(staticOutputDb(-20, s)).toBeCloseTo(-20 - (0.75 * 6) / 8 + 2, 12);
  });

  it("places the operating point where the curve reduces by the metered amount", () => {
    const p = operatingPoint(3, s)!;
    expect(p.inputDb).toBeCloseTo(-20 + 3 / 0.75, 6);
    expect(p.outputDb).toBeCloseTo(p.inputDb - 3 + 2, 6);
    expect(operatingPoint(0, s)).toBeNull();
  });
});

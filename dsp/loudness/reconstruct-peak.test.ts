// The 8× reconstruction: its response (analytic, from the stage
// coefficients), sines against their analytic amplitude, the fused kernels
// against the plain definition, and noise against sox's very-high-quality
// resampler at 8×fs (sox-reference.ts), at 44.1, 48 and 96 kHz.
import { describe, expect, it } from "vitest";
import { bandLimited, createGaussian, fade, sine, whiteNoise } from "../../bench/signals.ts";
import { LoudnessMeter } from "./meter.ts";
import { RECONSTRUCT_LATENCY_FRAMES, ReconstructedPeakDetector, reconstructResponse, referencePoints } from "./reconstruct-peak.ts";
import { hasSox, soxReconstructedPeakDb } from "./sox-reference.ts";

const RATES = [44100, 48000, 96000];

function peakDb(fs: number, x: Float64Array[], block = 4096): number {
  const d = new ReconstructedPeakDetector(fs, x.length, block);
  const padded = x.map((c) => {
    const p = new Float64Array(c.length + RECONSTRUCT_LATENCY_FRAMES);
    p.set(c);
    return p;
  });
  for (let s = 0; s < padded[0].length; s += block) {
    const n = Math.min(block, padded[0].length - s);
    d.process(padded.map((c) => c.subarray(s, s + n)), n);
  }
  return 20 * Math.log10(d.maxAbs);
}

describe("reconstructed peak (8×, flat to 0.45·fs)", () => {
  it("response within ±0.02 dB up to 0.45·fs, images of that band at least 59 dB down (analytic, from the coefficients)", () => {
    for (const fs of RATES) {
      for (let f = 0; f <= 0.45 * fs; f += fs / 2000) expect(Math.abs(20 * Math.log10(reconstructResponse(f, fs)))).toBeLessThan(0.02);
      // Images of content at f ≤ 0.45·fs fall at k·fs ± f, inside [0.55·fs, 3.45·fs] of the 8× stream.
      for (let f = 0.55 * fs; f <= 3.45 * fs; f += fs / 2000) expect(20 * Math.log10(Math.abs(reconstructResponse(f, fs)))).toBeLessThan(-59);
    }
  });

  it("sines up to 0.45·fs read their amplitude: within 0.02 dB above, and below by at most the 8× grid's miss 1 − cos(π·f/8fs) plus 0.02 dB (analytic)", () => {
    for (const fs of RATES) {
      for (const ratio of [0.01, 0.1, 0.25, 0.33, 0.41, 0.45]) {
        for (const phase of [0.1, 0.9, 2.3]) {
          const f = ratio * fs;
          const x = fade(sine(fs / 5, f, fs, -3, phase), fs / 100);
          const err = peakDb(fs, [x]) + 3;
          expect(err).toBeLessThan(0.02);
          expect(err).toBeGreaterThan(20 * Math.log10(Math.cos((Math.PI * ratio) / 8)) - 0.02);
        }
      }
    }
  });

  it("an 18 kHz sine at 48 kHz: the BS.1770-4 true peak (4×) reads it about 0.3 dB low, the reconstructed peak within 0.02 dB", () => {
    const x = fade(sine(48000, 18000, 48000, -6, 0.4), 480);
    const r = new LoudnessMeter(48000, 2, { truePeak: true });
    r.process([x, x], x.length);
    const a = r.result();
    expect(a.truePeakDbtp).toBeLessThan(-6.15);
    expect(Math.abs(a.reconstructedPeakDb + 6)).toBeLessThan(0.02);
  });

  it("the fused kernels equal the plain definition of the three stages (within 1e-12) for every frame", () => {
    const x = whiteNoise(3000, 5, 0.9);
    const d = new ReconstructedPeakDetector(48000, 1, 3000);
    const out = new Float64Array(3000);
    d.processPerFrame([x], 3000, out);
    for (let i = 40; i < 3000; i++) {
      const n = i - RECONSTRUCT_LATENCY_FRAMES;
      const want = Math.max(...referencePoints(x, n).map(Math.abs));
      expect(Math.abs(out[i] - want)).toBeLessThan(1e-12);
      expect(out[i]).toBeGreaterThanOrEqual(Math.abs(x[n]));
    }
  });

  it("block size never changes the reading; process and processPerFrame agree; exactAbove keeps values above it exact", () => {
    // Loud and quiet stretches, so some chunks are over the level and some provably under it.
    const x = [whiteNoise(20000, 21, 0.8), whiteNoise(20000, 22, 0.5)].map((c) => c.map((v, i) => (Math.floor(i / 2500) % 2 ? v : 0.3 * v)));
    const a = peakDb(44100, x, 4096);
    expect(peakDb(44100, x, 1)).toBe(a);
    expect(peakDb(44100, x, 137)).toBe(a);
    const exact = new ReconstructedPeakDetector(44100, 2, 1000), fast = new ReconstructedPeakDetector(44100, 2, 1000);
    const e = new Float64Array(1000), f = new Float64Array(1000);
    const level = 0.9;
    let over = 0, bounded = 0;
    for (let s = 0; s < 20000; s += 1000) {
      const block = x.map((c) => c.subarray(s, s + 1000));
      exact.processPerFrame(block, 1000, e);
      fast.processPerFrame(block, 1000, f, level);
      for (let i = 0; i < 1000; i++) {
        if (e[i] > level) {
          over++;
          expect(f[i]).toBe(e[i]);
        } else {
          expect(f[i]).toBeGreaterThanOrEqual(e[i]);
          expect(f[i]).toBeLessThanOrEqual(level);
          if (f[i] !== e[i]) bounded++;
        }
      }
    }
    expect(over).toBeGreaterThan(10);
    expect(bounded).toBeGreaterThan(1000);
  });

  it.skipIf(!hasSox)("noise band-limited below 0.45·fs: the reading equals sox's 8× reconstruction (rate -v, sox stats) within 0.02 dB", () => {
    for (const fs of RATES) {
      for (const seed of [1, 2]) {
        // Gaussian noise, low-passed at 0.44·fs (bench/signals.ts), scaled to stay under 0 dBFS inside sox.
        const g = createGaussian(seed);
        const x = fade(bandLimited(new Float64Array(fs / 2).map(() => 0.2 * g())), fs / 100);
        const sox = soxReconstructedPeakDb(fs, [x]);
        expect(Math.abs(peakDb(fs, [x]) - sox)).toBeLessThan(0.02);
      }
    }
  });
});

import { describe, expect, it } from "vitest";
import { Quantizer } from "./quantizer.ts";
import { Prng } from "./prng.ts";

const FS = 48000;

function dftAmplitude(x: Float64Array, freqHz: number): number {
  // Whole cycles in the buffer: a plain DFT bin, no window needed.
  let re = 0, im = 0;
  for (let i = 0; i < x.length; i++) {
    const ph = (2 * Math.PI * freqHz * i) / FS;
    re += x[i] * Math.cos(ph);
    im += x[i] * Math.sin(ph);
  }
  return (2 * Math.hypot(re, im)) / x.length;
}

describe("TPDF dither (analytic: rounding LSB²/12 + TPDF 2·LSB²/12 → error RMS = LSB/2)", () => {
  it("16-bit total error RMS is LSB/2 = 1/65536 (−96.33 dBFS) within 0.2 dB", () => {
    const n = 200_000;
    const x = new Float64Array(n);
    for (let i = 0; i < n; i++) x[i] = 0.3 * Math.sin((2 * Math.PI * 997 * i) / FS) + 1e-3 * Math.sin(i * 0.01);
    const y = x.slice();
    new Quantizer(1, 16, "tpdf").process([y], n);
    let e = 0;
    for (let i = 0; i < n; i++) e += (y[i] - x[i]) ** 2;
    const errDb = 10 * Math.log10(e / n);
    const expectedDb = 20 * Math.log10(1 / 65536);
    expect(expectedDb).toBeCloseTo(-96.33, 2);
    expect(Math.abs(errDb - expectedDb)).toBeLessThan(0.2);
  });

  it("rounding a −90 dBFS 997 Hz sine to 16 bits makes harmonics; TPDF dither removes them", () => {
    const n = 48000; // 1 s of 997 Hz: whole cycles
    const x = new Float64Array(n);
    const amp = 10 ** (-90 / 20); // ≈ 1.04 LSB
    for (let i = 0; i < n; i++) x[i] = amp * Math.sin((2 * Math.PI * 997 * i) / FS + 0.3);
    const plain = x.slice();
    new Quantizer(1, 16, "none").process([plain], n);
    const dithered = x.slice();
    new Quantizer(1, 16, "tpdf").process([dithered], n);
    // Power sum of harmonics 2..9 (the bins of a 997 Hz tone over 1 s).
    const harmonicsDb = (y: Float64Array): number => {
      let p = 0;
      for (let k = 2; k <= 9; k++) p += dftAmplitude(y, 997 * k) ** 2;
      return 10 * Math.log10(p);
    };
    const plainDb = harmonicsDb(plain);
    const ditheredDb = harmonicsDb(dithered);
    // Undithered: distortion products within ~15 dB of the tone.
    expect(plainDb).toBeGreaterThan(-105);
    // Dithered: the bins hold only noise (≈ −96.3 − 10·log10(n/2) ≈ −140 dB per bin).
    expect(ditheredDb).toBeLessThan(plainDb - 20);
    // The fundamental survives dithering (within 0.5 dB).
    expect(Math.abs(20 * Math.log10(dftAmplitude(dithered, 997) / amp))).toBeLessThan(0.5);
  });

  it("is deterministic and block-size independent, 32f passes through", () => {
    const x = new Float64Array(1000).map((_, i) => Math.sin(i * 0.1) * 0.5);
    const a = x.slice(), b = x.slice();
    new Quantizer(1, 24, "tpdf").process([a], 1000);
    const q = new Quantizer(1, 24, "tpdf");
    q.process([b.subarray(0, 333)], 333);
    q.process([b.subarray(333)], 667);
    expect(Array.from(a)).toEqual(Array.from(b));
    const f = x.slice();
    new Quantizer(1, "32f", "tpdf").process([f], 1000);
    expect(Array.from(f)).toEqual(Array.from(x));
  });
});

describe("Prng.fillTpdf", () => {
  it("is exactly next() − next() per value, and leaves the generator where two calls each would", () => {
    const a = new Prng(12345), b = new Prng(12345);
    const out = new Float64Array(1000);
    a.fillTpdf(out, 1000);
    for (let i = 0; i < 1000; i++) expect(out[i]).toBe(b.next() - b.next());
    expect(a.next()).toBe(b.next());
  });
});

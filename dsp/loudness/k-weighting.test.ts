// K-weighting: ITU-R BS.1770-4 table at 48 kHz, the analogue prototype at other rates.
import { describe, expect, it } from "vitest";
import { biquadMagnitudeDb } from "../filters/biquad-design.ts";
import { BS1770_HIGHPASS_48K, BS1770_SHELF_48K, deriveHighPassTableStyle, deriveShelf, kWeightingCoeffs } from "./k-weighting.ts";

const kDb = (fs: number, f: number) => {
  const [a, b] = kWeightingCoeffs(fs);
  return biquadMagnitudeDb(a, f, fs) + biquadMagnitudeDb(b, f, fs);
};

describe("K-weighting (ITU-R BS.1770-4)", () => {
  it("48 kHz coefficients are the standard's table", () => {
    const [shelf, hp] = kWeightingCoeffs(48000);
    // Table 1 and Table 2 of BS.1770-4, typed independently here.
    expect(shelf).toEqual({ b0: 1.53512485958697, b1: -2.69169618940638, b2: 1.19839281085285, a1: -1.69065929318241, a2: 0.73248077421585 });
    expect(hp).toEqual({ b0: 1.0, b1: -2.0, b2: 1.0, a1: -1.99004745483398, a2: 0.99007225036621 });
  });

  it("the prototype used for other rates reproduces the 48 kHz table", () => {
    const s = deriveShelf(48000);
    const h = deriveHighPassTableStyle(48000);
    for (const k of ["b0", "b1", "b2", "a1", "a2"] as const) {
      expect(Math.abs(s[k] - BS1770_SHELF_48K[k])).toBeLessThan(1e-9);
      expect(Math.abs(h[k] - BS1770_HIGHPASS_48K[k])).toBeLessThan(1e-9);
    }
  });

  it("response: ~+0.69 dB at 1 kHz (the −0.691 offset cancels it), ~+4 dB shelf, high-pass below 100 Hz", () => {
    // BS.1770-4: a 997 Hz sine at 0 dBFS in one channel reads −3.01 LKFS, so K(997 Hz) = +0.691 dB.
    expect(kDb(48000, 997)).toBeCloseTo(0.691, 2);
    expect(kDb(48000, 10000)).toBeGreaterThan(3.9);
    expect(kDb(48000, 10000)).toBeLessThan(4.3);
    // RLB prototype (2nd-order high-pass, f0 ≈ 38.1 Hz, Q ≈ 0.5): ≈ −6 dB at f0 by the analogue formula.
    const f0 = 38.13547087602444, q = 0.5003270373238773;
    for (const f of [20, 38.135, 60, 100]) {
      const r = f / f0;
      const analogueDb = 10 * Math.log10(r ** 4 / ((1 - r * r) ** 2 + (r / q) ** 2));
      const [, hp] = kWeightingCoeffs(48000);
      expect(biquadMagnitudeDb(hp, f, 48000) - 20 * Math.log10(1 + Math.tan((Math.PI * f0) / 48000) / q + Math.tan((Math.PI * f0) / 48000) ** 2)).toBeCloseTo(analogueDb, 2);
    }
  });

  it("matches the analogue prototype (shelf × high-pass, with the table's 1.005 high-pass gain) within 0.02 dB to 2 kHz", () => {
    // H(s) = (Vh s² + Vb (ω0/Q) s + ω0²) / (s² + (ω0/Q) s + ω0²) for the shelf; s²/(s² + (ω0/Q) s + ω0²) for the high-pass.
    const shelfDb = (f: number) => {
      const f0 = 1681.974450955533, q = 0.7071752369554196, vh = 10 ** (3.999843853973347 / 20), vb = vh ** 0.4996667741545416;
      const r = f / f0;
      const numRe = 1 - vh * r * r, numIm = (vb * r) / q, denRe = 1 - r * r, denIm = r / q;
      return 10 * Math.log10((numRe ** 2 + numIm ** 2) / (denRe ** 2 + denIm ** 2));
    };
    const hpDb = (f: number) => {
      const f0 = 38.13547087602444, q = 0.5003270373238773, r = f / f0;
      return 10 * Math.log10(r ** 4 / ((1 - r * r) ** 2 + (r / q) ** 2));
    };
    const k48 = Math.tan((Math.PI * 38.13547087602444) / 48000);
    const tableGainDb = 20 * Math.log10(1 + k48 / 0.5003270373238773 + k48 * k48);
    for (const fs of [44100, 48000, 96000]) {
      for (const f of [25, 50, 100, 200, 500, 997, 1500, 2000]) {
        expect(Math.abs(kDb(fs, f) - (shelfDb(f) + hpDb(f) + tableGainDb))).toBeLessThan(0.02);
      }
    }
  });

  it("44.1, 88.2, 96 and 192 kHz match 48 kHz within 0.01 dB up to 10 kHz", () => {
    for (const fs of [44100, 88200, 96000, 192000]) {
      for (const f of [20, 50, 100, 500, 997, 2000, 5000, 8000, 10000]) {
        expect(Math.abs(kDb(fs, f) - kDb(48000, f))).toBeLessThan(0.01);
      }
    }
  });
});

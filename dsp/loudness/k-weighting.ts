// K-weighting of ITU-R BS.1770-4: stage 1, a high shelf (~+4 dB above
// ~1.7 kHz, the head's acoustic effect); stage 2, the RLB high-pass (~38 Hz).
//
// At 48 kHz the coefficients are the table of BS.1770-4 verbatim. Other rates
// use the analogue prototype behind that table: its f0, Q and gain (the
// values widely used to re-derive the table, from memory; at 48 kHz they
// reproduce it to ~1e-9, which the tests check), designed by the bilinear
// transform with f0 pre-warped (K = tan(π f0 / fs)). The table's high-pass has
// numerator 1, −2, 1 without the 1/a0 of the bilinear design, i.e. a gain of
// a0(48 kHz) ≈ 1.005 above the prototype; derived rates keep that same gain so
// every rate reads the same loudness.

import type { BiquadCoeffs } from "../filters/biquad-design.ts";

export const BS1770_SHELF_48K: Readonly<BiquadCoeffs> = Object.freeze({
  b0: 1.53512485958697,
  b1: -2.69169618940638,
  b2: 1.19839281085285,
  a1: -1.69065929318241,
  a2: 0.73248077421585,
});

export const BS1770_HIGHPASS_48K: Readonly<BiquadCoeffs> = Object.freeze({
  b0: 1.0,
  b1: -2.0,
  b2: 1.0,
  a1: -1.99004745483398,
  a2: 0.99007225036621,
});

// Analogue prototype of the table (from memory).
const SHELF_F0_HZ = 1681.974450955533;
const SHELF_GAIN_DB = 3.999843853973347;
const SHELF_Q = 0.7071752369554196;
const SHELF_VB_EXPONENT = 0.4996667741545416;
const HIGHPASS_F0_HZ = 38.13547087602444;
const HIGHPASS_Q = 0.5003270373238773;

export function deriveShelf(sampleRate: number): BiquadCoeffs {
  const K = Math.tan((Math.PI * SHELF_F0_HZ) / sampleRate);
  const Vh = Math.pow(10, SHELF_GAIN_DB / 20);
  const Vb = Math.pow(Vh, SHELF_VB_EXPONENT);
  const a0 = 1 + K / SHELF_Q + K * K;
  return {
    b0: (Vh + (Vb * K) / SHELF_Q + K * K) / a0,
    b1: (2 * (K * K - Vh)) / a0,
    b2: (Vh - (Vb * K) / SHELF_Q + K * K) / a0,
    a1: (2 * (K * K - 1)) / a0,
    a2: (1 - K / SHELF_Q + K * K) / a0,
  };
}

/** Bilinear high-pass with numerator 1, −2, 1 (unnormalised), as in the 48 kHz table. */
export function deriveHighPassTableStyle(sampleRate: number): BiquadCoeffs {
  const K = Math.tan((Math.PI * HIGHPASS_F0_HZ) / sampleRate);
  const a0 = 1 + K / HIGHPASS_Q + K * K;
  return { b0: 1, b1: -2, b2: 1, a1: (2 * (K * K - 1)) / a0, a2: (1 - K / HIGHPASS_Q + K * K) / a0 };
}

export function deriveHighPass(sampleRate: number): BiquadCoeffs {
  const K = Math.tan((Math.PI * HIGHPASS_F0_HZ) / sampleRate);
  const K48 = Math.tan((Math.PI * HIGHPASS_F0_HZ) / 48000);
  const a0 = 1 + K / HIGHPASS_Q + K * K;
  const gain48 = 1 + K48 / HIGHPASS_Q + K48 * K48; // the table's implicit gain over the prototype
  const g = gain48 / a0;
  return { b0: g, b1: -2 * g, b2: g, a1: (2 * (K * K - 1)) / a0, a2: (1 - K / HIGHPASS_Q + K * K) / a0 };
}

/** [shelf, high-pass] for the sample rate. */
export function kWeightingCoeffs(sampleRate: number): [BiquadCoeffs, BiquadCoeffs] {
  if (sampleRate === 48000) return [{ ...BS1770_SHELF_48K }, { ...BS1770_HIGHPASS_48K }];
  return [deriveShelf(sampleRate), deriveHighPass(sampleRate)];
}

// Half-band low-pass as two all-pass branches (an elliptic half-band filter
// in its polyphase IIR form; Valenzuela & Constantinides 1983, Renfors &
// Saramäki 1987 — from memory):
//   H(z) = ½ · [A0(z²) + z⁻¹ · A1(z²)],   A(z) = Π (a + z⁻¹) / (1 + a·z⁻¹)
// Each branch is a cascade of first-order all-passes in z (one multiply
// each), so up- or down-sampling by 2 costs one multiply per coefficient per
// base-rate frame, several times fewer than a linear-phase FIR of the same
// stopband. The price is phase: the filter is not linear-phase, so the
// saturator runs its dry path through the same filters (see saturator.ts).
//
// Design: the elliptic half-band of order 2n + 1 for a transition band
// [¼ − t/2, ¼ + t/2] (cycles per sample at the rate it runs at). Its poles
// lie on the imaginary axis at ±j·√aᵢ; aᵢ follow from the Jacobi elliptic
// functions, evaluated here with their theta-function series (the nome q of
// the modulus k = tan²(π(1 − 2t)/4), then the classic ratio of theta sums;
// from memory). The coefficients sorted ascending go alternately to A0 and
// A1. The tests check the result against the transfer function evaluated
// directly (stopband, passband, power complementarity), not these formulas.

export interface HalfBandAllPass {
  /** First-order all-pass coefficients of the undelayed branch A0, ascending. */
  branch0: Float64Array;
  /** Coefficients of the delayed branch A1, ascending. */
  branch1: Float64Array;
}

/** The elliptic half-band with `count` coefficients (order 2·count + 1) and transition width `transition` (0 < t < ½). */
export function designHalfBand(count: number, transition: number): HalfBandAllPass {
  if (!(Number.isInteger(count) && count >= 1)) throw new RangeError(`coefficient count must be a positive integer, got ${count}`);
  if (!(transition > 0 && transition < 0.5)) throw new RangeError(`transition must lie in (0, 0.5), got ${transition}`);
  const k = Math.tan(((1 - 2 * transition) * Math.PI) / 4) ** 2;
  // Nome from the complementary modulus: q ≈ e + 2e⁵ + 15e⁹ + 150e¹³.
  const kp4 = Math.pow(1 - k * k, 0.25);
  const e = (0.5 * (1 - kp4)) / (1 + kp4);
  const e4 = e ** 4;
  const q = e * (1 + e4 * (2 + e4 * (15 + 150 * e4)));
  const order = 2 * count + 1;
  const coefs: number[] = [];
  for (let i = 1; i <= count; i++) {
    let num = 0, den = 0;
    for (let m = 0; ; m++) {
      const t = (m % 2 ? -1 : 1) * q ** (m * (m + 1)) * Math.sin(((2 * m + 1) * i * Math.PI) / order);
      num += t;
      if (Math.abs(t) < 1e-100) break;
    }
    for (let m = 1; ; m++) {
      const t = (m % 2 ? -1 : 1) * q ** (m * m) * Math.cos((2 * m * i * Math.PI) / order);
      den += t;
      if (Math.abs(t) < 1e-100) break;
    }
    const w = (num * q ** 0.25) / (den + 0.5);
    const w2 = w * w;
    const x = Math.sqrt((1 - w2 * k) * (1 - w2 / k)) / (1 + w2);
    coefs.push((1 - x) / (1 + x));
  }
  coefs.sort((a, b) => a - b);
  return {
    branch0: Float64Array.from(coefs.filter((_, i) => i % 2 === 0)),
    branch1: Float64Array.from(coefs.filter((_, i) => i % 2 === 1)),
  };
}

/** Complex response of a cascade of first-order all-passes (a + z⁻¹)/(1 + a·z⁻¹) at angle w (radians per sample). */
export function allPassResponse(coefs: ArrayLike<number>, w: number): [number, number] {
  let re = 1, im = 0;
  const c = Math.cos(w), s = Math.sin(w);
  for (let i = 0; i < coefs.length; i++) {
    const a = coefs[i];
    const nr = a + c, ni = -s, dr = 1 + a * c, di = -a * s;
    const d = dr * dr + di * di;
    const r = (nr * dr + ni * di) / d, q = (ni * dr - nr * di) / d;
    const re2 = re * r - im * q;
    im = re * q + im * r;
    re = re2;
  }
  return [re, im];
}

/** Complex response of H(z) at f cycles per sample of the rate it runs at. */
export function halfBandResponse(filter: HalfBandAllPass, f: number): [number, number] {
  const w = 2 * Math.PI * f;
  const [r0, i0] = allPassResponse(filter.branch0, 2 * w);
  const [r1, i1] = allPassResponse(filter.branch1, 2 * w);
  const c = Math.cos(w), s = -Math.sin(w);
  return [0.5 * (r0 + r1 * c - i1 * s), 0.5 * (i0 + r1 * s + i1 * c)];
}

/** |H| in dB at f cycles per sample. */
export function halfBandMagnitudeDb(filter: HalfBandAllPass, f: number): number {
  const [re, im] = halfBandResponse(filter, f);
  return 10 * Math.log10(re * re + im * im);
}

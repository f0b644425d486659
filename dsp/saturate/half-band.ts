// Half-band FIR design (Kaiser-windowed sinc, cutoff at a quarter of the
// rate it runs at). Half-band: every tap at an even distance from the centre
// is zero except the centre (0.5), so polyphase up/down sampling by 2 costs
// about taps/2 multiplies per high-rate pair. Lengths are 4k+3 so the centre
// index (taps−1)/2 is odd and the end taps are non-zero.
//
// Kaiser design formulas (Kaiser 1974; Oppenheim & Schafer, from memory):
//   β = 0.1102 (A − 8.7) for A > 50 dB;  N − 1 ≈ (A − 7.95) / (2.285 Δω).

export function besselI0(x: number): number {
  let sum = 1, term = 1;
  const q = (x * x) / 4;
  for (let k = 1; k < 200; k++) {
    term *= q / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

export function kaiserBeta(stopbandDb: number): number {
  return stopbandDb > 50 ? 0.1102 * (stopbandDb - 8.7) : stopbandDb >= 21 ? 0.5842 * (stopbandDb - 21) ** 0.4 + 0.07886 * (stopbandDb - 21) : 0;
}

/** Taps of a half-band low-pass, DC gain 1, `taps` = 4k+3. */
export function designHalfBand(taps: number, stopbandDb: number): Float64Array {
  if ((taps - 3) % 4 !== 0) throw new RangeError(`half-band length must be 4k+3, got ${taps}`);
  const beta = kaiserBeta(stopbandDb);
  const centre = (taps - 1) / 2;
  const h = new Float64Array(taps);
  const i0Beta = besselI0(beta);
  for (let n = 0; n < taps; n++) {
    const m = n - centre;
    const sinc = m === 0 ? 0.5 : Math.sin((Math.PI * m) / 2) / (Math.PI * m);
    const r = m / centre;
    h[n] = (sinc * besselI0(beta * Math.sqrt(Math.max(0, 1 - r * r)))) / i0Beta;
  }
  // Exact zeros and DC gain 1 (the windowed sinc sums to ~1).
  let sum = 0;
  for (let n = 0; n < taps; n++) {
    if ((n - centre) % 2 === 0 && n !== centre) h[n] = 0;
    sum += h[n];
  }
  const fix = 0.5 / (sum - h[centre]);
  for (let n = 0; n < taps; n++) if (n !== centre) h[n] *= fix;
  return h;
}

/** Magnitude (dB) of an FIR at a normalised frequency (cycles per sample). */
export function firMagnitudeDb(h: Float64Array, freq: number): number {
  let re = 0, im = 0;
  for (let n = 0; n < h.length; n++) {
    re += h[n] * Math.cos(2 * Math.PI * freq * n);
    im -= h[n] * Math.sin(2 * Math.PI * freq * n);
  }
  return 10 * Math.log10(re * re + im * im);
}

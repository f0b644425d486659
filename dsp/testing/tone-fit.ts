// Measures a sine of known frequency in a signal by least squares on a sine
// and a cosine (no windowing, so any frame range works): its amplitude, its
// phase, and the RMS of what is left once it is removed. Used by the tests
// and the benchmark of the resampler.

export interface ToneFit {
  amplitude: number;
  /** Phase (radians) of amplitude * sin(2 pi f n / fs + phase), n counted from `start`. */
  phaseRad: number;
  /** RMS of signal minus the fitted tone. */
  residualRms: number;
}

export function fitTone(signal: Float64Array, freqHz: number, sampleRate: number, start = 0, end = signal.length): ToneFit {
  const omega = (2 * Math.PI * freqHz) / sampleRate;
  let ss = 0, cc = 0, sc = 0, ys = 0, yc = 0;
  for (let n = start; n < end; n++) {
    const s = Math.sin(omega * (n - start));
    const c = Math.cos(omega * (n - start));
    ss += s * s; cc += c * c; sc += s * c;
    ys += signal[n] * s; yc += signal[n] * c;
  }
  const det = ss * cc - sc * sc;
  const a = (ys * cc - yc * sc) / det; // sine weight
  const b = (yc * ss - ys * sc) / det; // cosine weight
  let residual = 0;
  for (let n = start; n < end; n++) {
    const e = signal[n] - a * Math.sin(omega * (n - start)) - b * Math.cos(omega * (n - start));
    residual += e * e;
  }
  return { amplitude: Math.hypot(a, b), phaseRad: Math.atan2(b, a), residualRms: Math.sqrt(residual / (end - start)) };
}

export function rms(signal: Float64Array, start = 0, end = signal.length): number {
  let sum = 0;
  for (let n = start; n < end; n++) sum += signal[n] * signal[n];
  return Math.sqrt(sum / (end - start));
}

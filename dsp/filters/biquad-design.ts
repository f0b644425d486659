// Biquad coefficient design after the RBJ Audio EQ Cookbook (W3C note
// "Audio EQ Cookbook"). Pure functions: frequencies in Hz, gains in dB,
// coefficients normalised so that a0 = 1.

export type BiquadShape =
  | "peak"
  | "lowShelf"
  | "highShelf"
  | "highPass"
  | "lowPass"
  | "notch"
  | "allPass"
  | "bandPass";

/** H(z) = (b0 + b1 z^-1 + b2 z^-2) / (1 + a1 z^-1 + a2 z^-2). */
export interface BiquadCoeffs {
  b0: number;
  b1: number;
  b2: number;
  a1: number;
  a2: number;
}

export interface BiquadParams {
  freqHz: number;
  /** Quality factor; default 1/√2 (Butterworth for the pass filters). Shelves use it only if `slope` is absent. */
  q?: number;
  /** Shelf slope S (1 = steepest without overshoot); shelves default to S = 1 when neither q nor slope is given. */
  slope?: number;
  /** Gain of peak and shelf shapes; ignored by the others. */
  gainDb?: number;
}

export const BUTTERWORTH_Q = Math.SQRT1_2;

/** The filter that passes everything unchanged. */
export const IDENTITY_COEFFS: Readonly<BiquadCoeffs> = Object.freeze({ b0: 1, b1: 0, b2: 0, a1: 0, a2: 0 });

export function designBiquad(shape: BiquadShape, params: BiquadParams, sampleRate: number): BiquadCoeffs {
  const { freqHz } = params;
  if (!(sampleRate > 0)) throw new RangeError(`sample rate must be positive, got ${sampleRate}`);
  if (!(freqHz > 0 && freqHz < sampleRate / 2)) {
    throw new RangeError(`freqHz must lie between 0 and Nyquist (${sampleRate / 2} Hz), got ${freqHz}`);
  }
  const gainDb = params.gainDb ?? 0;
  const w0 = (2 * Math.PI * freqHz) / sampleRate;
  const cosW = Math.cos(w0);
  const sinW = Math.sin(w0);
  const A = Math.pow(10, gainDb / 40);
  const isShelf = shape === "lowShelf" || shape === "highShelf";
  let alpha: number;
  if (isShelf && (params.slope !== undefined || params.q === undefined)) {
    const slope = params.slope ?? 1;
    if (!(slope > 0)) throw new RangeError(`shelf slope must be positive, got ${slope}`);
    alpha = (sinW / 2) * Math.sqrt((A + 1 / A) * (1 / slope - 1) + 2);
  } else {
    const q = params.q ?? BUTTERWORTH_Q;
    if (!(q > 0)) throw new RangeError(`q must be positive, got ${q}`);
    alpha = sinW / (2 * q);
  }

  let b0: number, b1: number, b2: number, a0: number, a1: number, a2: number;
  switch (shape) {
    case "lowPass":
      b0 = (1 - cosW) / 2; b1 = 1 - cosW; b2 = b0;
      a0 = 1 + alpha; a1 = -2 * cosW; a2 = 1 - alpha;
      break;
    case "highPass":
      b0 = (1 + cosW) / 2; b1 = -(1 + cosW); b2 = b0;
      a0 = 1 + alpha; a1 = -2 * cosW; a2 = 1 - alpha;
      break;
    case "bandPass": // constant 0 dB peak gain
      b0 = alpha; b1 = 0; b2 = -alpha;
      a0 = 1 + alpha; a1 = -2 * cosW; a2 = 1 - alpha;
      break;
    case "notch":
      b0 = 1; b1 = -2 * cosW; b2 = 1;
      a0 = 1 + alpha; a1 = -2 * cosW; a2 = 1 - alpha;
      break;
    case "allPass":
      b0 = 1 - alpha; b1 = -2 * cosW; b2 = 1 + alpha;
      a0 = 1 + alpha; a1 = -2 * cosW; a2 = 1 - alpha;
      break;
    case "peak":
      b0 = 1 + alpha * A; b1 = -2 * cosW; b2 = 1 - alpha * A;
      a0 = 1 + alpha / A; a1 = -2 * cosW; a2 = 1 - alpha / A;
      break;
    case "lowShelf": {
      const k = 2 * Math.sqrt(A) * alpha;
      b0 = A * (A + 1 - (A - 1) * cosW + k);
      b1 = 2 * A * (A - 1 - (A + 1) * cosW);
      b2 = A * (A + 1 - (A - 1) * cosW - k);
      a0 = A + 1 + (A - 1) * cosW + k;
      a1 = -2 * (A - 1 + (A + 1) * cosW);
      a2 = A + 1 + (A - 1) * cosW - k;
      break;
    }
    case "highShelf": {
      const k = 2 * Math.sqrt(A) * alpha;
      b0 = A * (A + 1 + (A - 1) * cosW + k);
      b1 = -2 * A * (A - 1 + (A + 1) * cosW);
      b2 = A * (A + 1 + (A - 1) * cosW - k);
      a0 = A + 1 - (A - 1) * cosW + k;
      a1 = 2 * (A - 1 - (A + 1) * cosW);
      a2 = A + 1 - (A - 1) * cosW - k;
      break;
    }
    default:
      throw new RangeError(`unknown biquad shape: ${String(shape)}`);
  }
  return { b0: b0 / a0, b1: b1 / a0, b2: b2 / a0, a1: a1 / a0, a2: a2 / a0 };
}

/** |H(e^jω)|² at freqHz, evaluated analytically from the coefficients. */
export function biquadPowerGain(c: BiquadCoeffs, freqHz: number, sampleRate: number): number {
  const w = (2 * Math.PI * freqHz) / sampleRate;
  const c1 = Math.cos(w);
  const s1 = Math.sin(w);
  const c2 = Math.cos(2 * w);
  const s2 = Math.sin(2 * w);
  const nr = c.b0 + c.b1 * c1 + c.b2 * c2;
  const ni = -(c.b1 * s1 + c.b2 * s2);
  const dr = 1 + c.a1 * c1 + c.a2 * c2;
  const di = -(c.a1 * s1 + c.a2 * s2);
  return (nr * nr + ni * ni) / (dr * dr + di * di);
}

export function biquadMagnitudeDb(c: BiquadCoeffs, freqHz: number, sampleRate: number): number {
  return 10 * Math.log10(biquadPowerGain(c, freqHz, sampleRate));
}

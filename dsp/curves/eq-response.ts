// The EQ stage's magnitude response for drawing: the bands' RBJ coefficients
// (designBiquad, the very design the EQ stage runs) evaluated on a frequency
// grid and summed in dB, per channel mode. A band acts on stereo (both
// channels), mid, side, left or right (eq-stage.ts); each curve is the
// stereo bands plus the bands of that one mode, which is exactly what a
// signal on that channel alone (L, R, M or S) goes through.

import { biquadMagnitudeDb, designBiquad } from "../filters/biquad-design.ts";
import type { EqBand } from "../chain/schema.ts";

export type EqChannelMode = EqBand["channel"];

export interface EqCurve {
  /** "stereo" (both channels) or the one channel mode the curve is for. */
  mode: EqChannelMode;
  magnitudeDb: Float64Array;
}

/** `count` frequencies spaced evenly on a log axis from lowHz to highHz (both included). */
export function logFrequencies(lowHz: number, highHz: number, count: number): Float64Array {
  if (!(lowHz > 0 && highHz > lowHz && count >= 2)) throw new RangeError("need 0 < lowHz < highHz and at least 2 points");
  const out = new Float64Array(count);
  const ratio = Math.log(highHz / lowHz);
  for (let i = 0; i < count; i++) out[i] = lowHz * Math.exp((ratio * i) / (count - 1));
  return out;
}

/** One band's magnitude in dB at each frequency (frequencies at or above Nyquist read as NaN). */
export function eqBandMagnitudeDb(band: Pick<EqBand, "shape" | "freqHz" | "gainDb" | "q">, sampleRate: number, freqsHz: ArrayLike<number>): Float64Array {
  const out = new Float64Array(freqsHz.length);
  const nyquist = sampleRate / 2;
  if (!(band.freqHz > 0 && band.freqHz < nyquist)) return out.fill(NaN);
  const coeffs = designBiquad(band.shape, { freqHz: band.freqHz, q: band.q, gainDb: band.gainDb }, sampleRate);
  for (let i = 0; i < freqsHz.length; i++) out[i] = freqsHz[i] < nyquist ? biquadMagnitudeDb(coeffs, freqsHz[i], sampleRate) : NaN;
  return out;
}

/**
 * The curves to draw: always "stereo" (the stereo bands), then one curve per
 * other mode that has a band (stereo bands + that mode's bands), in the order
 * mid, side, left, right.
 */
export function eqResponse(bands: readonly Pick<EqBand, "shape" | "freqHz" | "gainDb" | "q" | "channel">[], sampleRate: number, freqsHz: ArrayLike<number>): EqCurve[] {
  const perBand = bands.map((b) => eqBandMagnitudeDb(b, sampleRate, freqsHz));
  const sum = (modes: EqChannelMode[]) => {
    const out = new Float64Array(freqsHz.length);
    bands.forEach((b, i) => {
      if (!modes.includes(b.channel ?? "stereo")) return;
      const m = perBand[i];
      for (let k = 0; k < out.length; k++) out[k] += m[k];
    });
    return out;
  };
  const curves: EqCurve[] = [{ mode: "stereo", magnitudeDb: sum(["stereo"]) }];
  for (const mode of ["mid", "side", "left", "right"] as const) {
    if (bands.some((b) => b.channel === mode)) curves.push({ mode, magnitudeDb: sum(["stereo", mode]) });
  }
  return curves;
}

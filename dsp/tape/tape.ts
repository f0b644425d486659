// Tape-style colour for the low end (chain stage "tape"). Design and sources:
// docs/decisions/2026-12-02-tape-stage.md.
//   record side, oversampled 2× or 4× (the saturator's half-band pairs):
//     pre-emphasis → soft magnetic curve → de-emphasis (tape-kernels.ts)
//   reproduce side, base rate: the head bump (cookbook peaking filter at
//     bumpHz, bumpDb, Q = BUMP_Q) and spacing loss (first-order low-pass,
//     −3 dB at rolloffHz).
// `driveDb` raises the level into the curve and the wet path is divided by
// it again, times a level compensation computed for Gaussian noise at
// −18 dBFS RMS (REFERENCE_RMS_DB), so drive changes character, not
// loudness, at that level. At driveDb 0 the curve sits CURVE_HEADROOM_DB
// above full scale: nearly linear (THD of a −12 dBFS sine below −60 dB).
// tapeSmallSignalDb() is the stage's response below the curve, for the
// desk's drawing and for the tests.

import { designBiquad, type BiquadCoeffs } from "../filters/biquad-design.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import { dbToLinear } from "../units.ts";
import { TapeKernel, tapeCurve, type TapeKernelParams } from "./tape-kernels.ts";

export { tapeCurve };

export interface TapeSettings {
  driveDb: number;
  bumpHz: number;
  bumpDb: number;
  /** −3 dB point of the high-frequency loss; null for none. */
  rolloffHz: number | null;
  blend: number;
  oversample: 2 | 4;
}

/** The bump's quality factor: its skirt stays under 0.2 dB at five times bumpHz even at the full 6 dB. */
export const BUMP_Q = 1.4;
/** Level into the curve at driveDb 0, relative to the signal: the curve's headroom. */
export const CURVE_HEADROOM_DB = 12;
/** Corner of the record pre-emphasis (a time constant of about 32 µs). */
export const EMPHASIS_HZ = 5000;
/** The level at which drive is level-compensated (RMS of Gaussian noise, dBFS). */
export const REFERENCE_RMS_DB = -18;
/** A loss at or above this fraction of the sample rate is left out (it would only notch the top octave's last few hertz). */
export const MAX_ROLLOFF_FRACTION = 0.475;

/** The curve's input gain for a driveDb. */
export function curveDrive(driveDb: number): number {
  return dbToLinear(driveDb - CURVE_HEADROOM_DB);
}

/**
 * RMS(x) / RMS(tapeCurve(d·x)/d) for Gaussian x of the given RMS: the wet
 * path's make-up (numeric integration over ±8σ of the normal density).
 */
export function noiseLevelCompensation(drive: number, rms: number): number {
  const n = 4000;
  let wet = 0, dry = 0;
  for (let i = 0; i <= n; i++) {
    const z = -8 + (16 * i) / n;
    const p = Math.exp(-0.5 * z * z);
    const x = rms * z;
    const y = tapeCurve(drive * x) / drive;
    wet += p * y * y;
    dry += p * x * x;
  }
  return Math.sqrt(dry / wet);
}

/** Head bump coefficients, or null when bumpDb is 0. */
export function designBump(settings: Pick<TapeSettings, "bumpHz" | "bumpDb">, sampleRate: number): BiquadCoeffs | null {
  if (settings.bumpDb === 0) return null;
  return designBiquad("peak", { freqHz: settings.bumpHz, gainDb: settings.bumpDb, q: BUMP_Q }, sampleRate);
}

/** First-order bilinear low-pass, −3 dB at rolloffHz (prewarped): [b0, b1, a1], or null when left out. */
export function designLoss(rolloffHz: number | null, sampleRate: number): [number, number, number] | null {
  if (rolloffHz === null || rolloffHz >= MAX_ROLLOFF_FRACTION * sampleRate) return null;
  const t = Math.tan((Math.PI * rolloffHz) / sampleRate);
  return [t / (1 + t), t / (1 + t), (t - 1) / (1 + t)];
}

/** The constant gain of the non-linear part at small signal: dry + wet make-up. */
export function smallSignalGain(settings: Pick<TapeSettings, "driveDb" | "blend">): number {
  const blend = clampBlend(settings.blend);
  return 1 - blend + blend * wetCompensation(settings.driveDb);
}

/**
 * RMS gain of the pre-emphasis 1 + jf/EMPHASIS_HZ on pink noise from 20 Hz
 * to 20 kHz (equal power per octave): √(1 + (f₂² − f₁²)/(2·fc²·ln(f₂/f₁))).
 * The curve meets the emphasised signal, this much louder than the input.
 */
export const EMPHASIS_PINK_GAIN = Math.sqrt(1 + (20000 ** 2 - 20 ** 2) / (2 * EMPHASIS_HZ ** 2 * Math.log(20000 / 20)));

/** The wet path's make-up at a driveDb: the Gaussian compensation at the emphasised reference level. */
export function wetCompensation(driveDb: number): number {
  return noiseLevelCompensation(curveDrive(driveDb), dbToLinear(REFERENCE_RMS_DB) * EMPHASIS_PINK_GAIN);
}

/**
 * The stage's magnitude (dB) at freqHz for signals well below the curve:
 * its designed linear filters times the small-signal gain. For the live
 * desk's curve; checked against the processor in tape.test.ts ("small-signal
 * response"). The oversampler's round trip adds less than 0.001 dB to 20 kHz.
 */
export function tapeSmallSignalDb(settings: TapeSettings, sampleRate: number, freqHz: number): number {
  let power = smallSignalGain(settings) ** 2;
  const bump = designBump(settings, sampleRate);
  if (bump) power *= biquadPower(bump.b0, bump.b1, bump.b2, bump.a1, bump.a2, freqHz, sampleRate);
  const loss = designLoss(settings.rolloffHz, sampleRate);
  if (loss) power *= biquadPower(loss[0], loss[1], 0, loss[2], 0, freqHz, sampleRate);
  return 10 * Math.log10(power);
}

function biquadPower(b0: number, b1: number, b2: number, a1: number, a2: number, freqHz: number, sampleRate: number): number {
  const w = (2 * Math.PI * freqHz) / sampleRate;
  const c1 = Math.cos(w), s1 = Math.sin(w), c2 = Math.cos(2 * w), s2 = Math.sin(2 * w);
  const nr = b0 + b1 * c1 + b2 * c2, ni = -(b1 * s1 + b2 * s2);
  const dr = 1 + a1 * c1 + a2 * c2, di = -(a1 * s1 + a2 * s2);
  return (nr * nr + ni * ni) / (dr * dr + di * di);
}

function clampBlend(blend: number): number {
  return Math.min(1, Math.max(0, blend));
}

export class TapeStage implements Processor, GainReductionSource {
  readonly latencyFrames: number;
  /** How hard the curve is hit: its compression (dB) at the loudest sample of each step, before emphasis. */
  readonly traceNames = ["curve"] as const;
  private readonly kernel: TapeKernel;
  private readonly params: TapeKernelParams;

  constructor(sampleRate: number, channels: number, settings: TapeSettings, maxBlockFrames: number) {
    void maxBlockFrames; // the fused kernels need no buffers
    this.kernel = new TapeKernel(settings.oversample, channels);
    this.latencyFrames = this.kernel.latencyFrames;
    this.params = { drive: 1, emphasisK: 0, dryGain: 1, wetGain: 0, bump: new Float64Array(5), loss: new Float64Array(3) };
    this.setSettings(sampleRate, settings);
  }

  /**
   * Live change (the desk): every setting but the oversampling factor, which
   * sizes the kernel. The filter states are kept; the desk glides the values.
   */
  setSettings(sampleRate: number, settings: TapeSettings): void {
    const drive = curveDrive(settings.driveDb);
    const blend = clampBlend(settings.blend);
    const bump = designBump(settings, sampleRate);
    const loss = designLoss(settings.rolloffHz, sampleRate);
    const p = this.params;
    p.drive = drive;
    // Backward-difference emphasis 1 + τ·fs·(1 − z⁻¹), τ = 1/(2π·EMPHASIS_HZ), at the high rate.
    p.emphasisK = (settings.oversample * sampleRate) / (2 * Math.PI * EMPHASIS_HZ);
    p.dryGain = 1 - blend;
    p.wetGain = (blend * wetCompensation(settings.driveDb)) / drive;
    if (bump) p.bump.set([bump.b0, bump.b1, bump.b2, bump.a1, bump.a2]);
    else p.bump.set([1, 0, 0, 0, 0]);
    if (loss) p.loss.set(loss);
    else p.loss.set([1, 0, 0]);
  }

  reset(): void {
    this.kernel.reset();
  }

  process(channels: Planar, frames: number): void {
    this.kernel.process(channels, frames, this.params);
  }

  takeGainReductionDb(out: Float64Array): void {
    const u = this.params.drive * this.kernel.takePeak();
    out[0] = u > 1e-9 ? 20 * Math.log10(u / tapeCurve(u)) : 0;
  }
}

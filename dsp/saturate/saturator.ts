// Soft saturation: y = tanh(d·x)/d (tanh by a Padé approximant, softClip) at 2× or 4× the sample rate (Oversampler),
// blended with the dry signal. d = drive (linear). Dividing by d keeps the
// small-signal gain at 1; the remaining level drop of the curve is made up
// by a fixed compensation computed for a reference sine (1 kHz-independent:
// a sine's RMS through a static curve depends only on its peak) at
// REFERENCE_PEAK_DB, so `blend` changes colour, not loudness, at that level.
// Dry and wet are mixed at the high rate, before the down filter: the
// half-band filters are not linear-phase, and this way the dry path goes
// through exactly the same filters as the wet one, so the blend never
// combs. (At blend 0 the stage is the oversampler's round trip: flat in
// magnitude to 20 kHz, a few frames of latency, a little phase shift near
// the top of the band.)
// Each factor runs as one fused pass (Saturate2x, Saturate4x), held by the
// tests to the Oversampler's round trip with the mix at the high rate.

import type { Planar, Processor } from "../processor.ts";
import { dbToLinear } from "../units.ts";
import { Saturate2x } from "./saturate-2x.ts";
import { Saturate4x } from "./saturate-4x.ts";
import { softClip } from "./soft-clip.ts";

export { softClip };

export interface SaturatorSettings {
  driveDb: number;
  blend: number;
  oversample: 2 | 4;
}

export const REFERENCE_PEAK_DB = -12;

/** RMS(dry) / RMS(softClip(d·x)/d) for a sine of the given peak (numeric, 4096 points). */
export function levelCompensation(drive: number, peak: number): number {
  let wet = 0, dry = 0;
  const n = 4096;
  for (let i = 0; i < n; i++) {
    const x = peak * Math.sin((2 * Math.PI * (i + 0.5)) / n);
    const y = softClip(drive * x) / drive;
    wet += y * y;
    dry += x * x;
  }
  return Math.sqrt(dry / wet);
}

export class Saturator implements Processor {
  readonly latencyFrames: number;
  private readonly fused: Saturate2x | Saturate4x;
  private drive: number;
  private wetGain: number;
  private dryGain: number;

  constructor(sampleRate: number, readonly channels: number, settings: SaturatorSettings, maxBlockFrames: number) {
    this.fused = settings.oversample === 2 ? new Saturate2x(channels) : new Saturate4x(channels);
    this.latencyFrames = this.fused.latencyFrames;
    this.drive = dbToLinear(settings.driveDb);
    const blend = Math.min(1, Math.max(0, settings.blend));
    this.wetGain = (blend * levelCompensation(this.drive, dbToLinear(REFERENCE_PEAK_DB))) / this.drive;
    this.dryGain = 1 - blend;
    void sampleRate; // the curve is rate-independent; kept for the common constructor shape
    void maxBlockFrames; // the fused kernels need no buffers
  }

  /** Live change of drive and blend (the listening desk), keeping the filter state; the oversampling factor is the constructor's. */
  setSettings(settings: SaturatorSettings): void {
    this.drive = dbToLinear(settings.driveDb);
    const blend = Math.min(1, Math.max(0, settings.blend));
    this.wetGain = (blend * levelCompensation(this.drive, dbToLinear(REFERENCE_PEAK_DB))) / this.drive;
    this.dryGain = 1 - blend;
  }

  reset(): void {
    this.fused.reset();
  }

  process(channels: Planar, frames: number): void {
    this.fused.process(channels, frames, this.drive, this.dryGain, this.wetGain);
  }
}

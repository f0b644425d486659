// Soft saturation: y = tanh(d·x)/d at 2× or 4× the sample rate (Oversampler),
// blended with the dry signal. d = drive (linear). Dividing by d keeps the
// small-signal gain at 1; the remaining level drop of the curve is made up
// by a fixed compensation computed for a reference sine (1 kHz-independent:
// a sine's RMS through a static curve depends only on its peak) at
// REFERENCE_PEAK_DB, so `blend` changes colour, not loudness, at that level.
// The dry path is delayed by the oversampler's latency so the two line up.

import type { Planar, Processor } from "../processor.ts";
import { dbToLinear } from "../units.ts";
import { Oversampler } from "./oversampler.ts";

export interface SaturatorSettings {
  driveDb: number;
  blend: number;
  oversample: 2 | 4;
}

export const REFERENCE_PEAK_DB = -12;

/** RMS(dry) / RMS(tanh(d·x)/d) for a sine of the given peak (numeric, 4096 points). */
export function levelCompensation(drive: number, peak: number): number {
  let wet = 0, dry = 0;
  const n = 4096;
  for (let i = 0; i < n; i++) {
    const x = peak * Math.sin((2 * Math.PI * (i + 0.5)) / n);
    const y = Math.tanh(drive * x) / drive;
    wet += y * y;
    dry += x * x;
  }
  return Math.sqrt(dry / wet);
}

export class Saturator implements Processor {
  readonly latencyFrames: number;
  private readonly oversampler: Oversampler;
  private readonly drive: number;
  private readonly wetGain: number;
  private readonly dryGain: number;
  private readonly dryDelay: Float64Array[];
  private readonly wet: Float64Array;
  private readonly delayFrames: number;

  constructor(sampleRate: number, readonly channels: number, settings: SaturatorSettings, maxBlockFrames: number) {
    this.oversampler = new Oversampler(settings.oversample, channels, maxBlockFrames);
    this.latencyFrames = this.oversampler.latencyFrames;
    this.delayFrames = this.latencyFrames;
    this.drive = dbToLinear(settings.driveDb);
    const blend = Math.min(1, Math.max(0, settings.blend));
    this.wetGain = (blend * levelCompensation(this.drive, dbToLinear(REFERENCE_PEAK_DB))) / this.drive;
    this.dryGain = 1 - blend;
    this.dryDelay = Array.from({ length: channels }, () => new Float64Array(this.delayFrames + maxBlockFrames));
    this.wet = new Float64Array(maxBlockFrames);
    void sampleRate; // the curve is rate-independent; kept for the common constructor shape
  }

  reset(): void {
    this.oversampler.reset();
    for (const d of this.dryDelay) d.fill(0);
  }

  process(channels: Planar, frames: number): void {
    const os = this.oversampler, drive = this.drive, wetGain = this.wetGain, dryGain = this.dryGain;
    const delay = this.delayFrames, wet = this.wet;
    for (let c = 0; c < this.channels; c++) {
      const x = channels[c];
      const high = os.up(c, x, frames);
      const n = frames * os.factor;
      // tanh(v) = 1 − 2/(e^(2v) + 1): Math.exp is much cheaper than Math.tanh
      // here; the clamp keeps e^(2v) finite (tanh(±20) = ±1 in float64).
      for (let i = 0; i < n; i++) {
        let v = 2 * drive * high[i];
        v = v > 40 ? 40 : v < -40 ? -40 : v;
        high[i] = 1 - 2 / (Math.exp(v) + 1);
      }
      os.down(c, wet, frames);
      const line = this.dryDelay[c];
      line.set(x.subarray(0, frames), delay);
      for (let i = 0; i < frames; i++) x[i] = dryGain * line[i] + wetGain * wet[i];
      line.copyWithin(0, frames, frames + delay);
    }
  }
}

// Soft saturation: y = tanh(d·x)/d (tanh by a Padé approximant, softClip) at 2× or 4× the sample rate (Oversampler),
// blended with the dry signal. d = drive (linear). Dividing by d keeps the
// small-signal gain at 1; the remaining level drop of the curve is made up
// by a fixed compensation computed for a reference sine (1 kHz-independent:
// a sine's RMS through a static curve depends only on its peak) at
// REFERENCE_PEAK_DB, so `blend` changes colour, not loudness, at that level.
// The dry path is delayed by the oversampler's latency so the two line up.
// 2× runs as one fused pass (Saturate2x: same filters, same curve); 4× goes
// through the Oversampler's buffers.

import type { Planar, Processor } from "../processor.ts";
import { dbToLinear } from "../units.ts";
import { Oversampler } from "./oversampler.ts";
import { Saturate2x } from "./saturate-2x.ts";
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
  private readonly oversampler: Oversampler | null; // 4×; 2× runs fused in Saturate2x
  private readonly fused2x: Saturate2x | null;
  private readonly drive: number;
  private readonly wetGain: number;
  private readonly dryGain: number;
  private readonly dryDelay: Float64Array[];
  private readonly wet: Float64Array;
  private readonly delayFrames: number;

  constructor(sampleRate: number, readonly channels: number, settings: SaturatorSettings, maxBlockFrames: number) {
    this.fused2x = settings.oversample === 2 ? new Saturate2x(channels, maxBlockFrames) : null;
    this.oversampler = this.fused2x ? null : new Oversampler(settings.oversample, channels, maxBlockFrames);
    this.latencyFrames = this.fused2x ? this.fused2x.latencyFrames : this.oversampler!.latencyFrames;
    this.delayFrames = this.latencyFrames;
    this.drive = dbToLinear(settings.driveDb);
    const blend = Math.min(1, Math.max(0, settings.blend));
    this.wetGain = (blend * levelCompensation(this.drive, dbToLinear(REFERENCE_PEAK_DB))) / this.drive;
    this.dryGain = 1 - blend;
    this.dryDelay = this.fused2x ? [] : Array.from({ length: channels }, () => new Float64Array(this.delayFrames + maxBlockFrames));
    this.wet = new Float64Array(this.fused2x ? 0 : maxBlockFrames);
    void sampleRate; // the curve is rate-independent; kept for the common constructor shape
  }

  reset(): void {
    this.fused2x?.reset();
    this.oversampler?.reset();
    for (const d of this.dryDelay) d.fill(0);
  }

  process(channels: Planar, frames: number): void {
    if (this.fused2x) {
      this.fused2x.process(channels, frames, this.drive, this.dryGain, this.wetGain);
      return;
    }
    const os = this.oversampler!, drive = this.drive, wetGain = this.wetGain, dryGain = this.dryGain;
    const delay = this.delayFrames, wet = this.wet;
    for (let c = 0; c < this.channels; c++) {
      const x = channels[c];
      const high = os.up(c, x, frames);
      const n = frames * os.factor;
      for (let i = 0; i < n; i++) high[i] = softClip(drive * high[i]);
      os.down(c, wet, frames);
      const line = this.dryDelay[c];
      line.set(x.subarray(0, frames), delay);
      for (let i = 0; i < frames; i++) x[i] = dryGain * line[i] + wetGain * wet[i];
      line.copyWithin(0, frames, frames + delay);
    }
  }
}

// Wideband RMS compressor (also one band of the multiband stage).
// Detector path: optional 2nd-order Butterworth high-pass (sidechain only,
// the audio is untouched) → stereo-linked RMS detector (max of the channels'
// mean squares) → static curve with soft knee → attack/release smoothing in
// dB (or the program-dependent "auto" release) → makeup. The same gain is
// applied to every channel, so the stereo image does not shift.
// Speed: each step is one tight loop over the block (sidechain filter and
// detector for both channels, static curve and smoothing, gain, audio); a block below the knee with the envelopes at rest skips from the
// detector straight to the makeup gain; the level (dB) and the gain use
// fastLog2 / fastExp2 (dsp/fast-math.ts, errors around 1e-12 dB), the
// per-frame logarithm and exponential having been most of the cost. (One
// loop for detector and static curve together measured slower in V8.)

import { fastExp2, fastLog2 } from "../fast-math.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import { GainSmoother } from "./gain-smoother.ts";
import { RmsDetector } from "./rms-detector.ts";

export interface CompressorSettings {
  thresholdDb: number;
  ratio: number;
  kneeDb: number;
  attackMs: number;
  releaseMs: number | "auto";
  makeupDb: number;
  rmsWindowMs: number;
  /** Detector-only high-pass; null/undefined = off. */
  sidechainHighPassHz?: number | null;
}

// 10·log10(2): log2 of a power → dB; log2(10)/20: gain dB → log2 of the gain.
const LOG2_POWER_TO_DB = 10 * Math.log10(2);
const DB_TO_LOG2_GAIN = Math.log2(10) / 20;

export class Compressor implements Processor, GainReductionSource {
  readonly latencyFrames = 0;
  readonly traceNames: readonly string[] = ["gr"];
  private readonly detector: RmsDetector;
  private readonly smoother: GainSmoother;
  private readonly power: Float64Array;
  private readonly gainBuffer: Float64Array;
  private readonly threshold: number;
  private readonly slope: number;
  private readonly knee: number;
  private readonly makeupDb: number;
  private readonly makeupGain: number;
  private readonly kneeStartPower: number;
  private maxReductionDb = 0;

  constructor(
    sampleRate: number,
    readonly channels: number,
    settings: CompressorSettings,
    maxBlockFrames: number,
  ) {
    this.detector = new RmsDetector(sampleRate, channels, settings.rmsWindowMs, settings.sidechainHighPassHz ?? null);
    this.smoother = new GainSmoother(sampleRate, settings.attackMs, settings.releaseMs);
    this.power = new Float64Array(maxBlockFrames);
    this.gainBuffer = new Float64Array(maxBlockFrames);
    this.threshold = settings.thresholdDb;
    this.slope = 1 - 1 / settings.ratio;
    this.knee = settings.kneeDb;
    this.makeupDb = settings.makeupDb;
    this.makeupGain = 10 ** (this.makeupDb / 20);
    // A block whose power stays at or below this has no reduction at all.
    this.kneeStartPower = 10 ** ((this.threshold - this.knee / 2) / 10);
  }

  reset(): void {
    this.detector.reset();
    this.smoother.reset();
    this.maxReductionDb = 0;
  }

  /** Gain reduction (dB, ≥ 0) per frame into `outDb`, no audio change. */
  detect(channels: Planar, frames: number, outDb: Float64Array): void {
    if (this.reduction(channels, frames, outDb)) outDb.fill(0, 0, frames);
  }

  /** Linear gain per frame (makeup included) into `out`, no audio change. */
  gain(channels: Planar, frames: number, out: Float64Array): void {
    if (this.reduction(channels, frames, out)) out.fill(this.makeupGain, 0, frames);
    else this.toLinearGain(out, frames);
  }

  process(channels: Planar, frames: number): void {
    const grDb = this.gainBuffer;
    if (this.reduction(channels, frames, grDb)) {
      const g = this.makeupGain;
      for (let c = 0; c < this.channels; c++) {
        const x = channels[c];
        for (let i = 0; i < frames; i++) x[i] *= g;
      }
      return;
    }
    const makeup = this.makeupDb;
    if (this.channels === 2) {
      // Gain and both channels in one loop (measured faster than a gain pass first).
      const l = channels[0], r = channels[1];
      for (let i = 0; i < frames; i++) {
        const g = fastExp2((makeup - grDb[i]) * DB_TO_LOG2_GAIN);
        l[i] *= g;
        r[i] *= g;
      }
      return;
    }
    this.toLinearGain(grDb, frames);
    for (let c = 0; c < this.channels; c++) {
      const x = channels[c];
      for (let i = 0; i < frames; i++) x[i] *= grDb[i];
    }
  }

  /**
   * Reduction (dB) per frame into `outDb`; returns true instead, leaving
   * `outDb` alone, when the whole block stays below the knee with the
   * envelopes at 0, so that the reduction is exactly 0 throughout.
   */
  private reduction(input: Planar, frames: number, outDb: Float64Array): boolean {
    const maxPower = this.detector.process(input, frames, this.power);
    if (!(maxPower > this.kneeStartPower) && this.smoother.atRest) return true;
    this.reductionFromPower(this.power, frames, outDb);
    return false;
  }

  /** Static curve and smoothing for a block of detected power: reduction (dB) per frame into `out`. */
  private reductionFromPower(power: Float64Array, frames: number, out: Float64Array): void {
    const t = this.threshold, slope = this.slope, w = this.knee, hw = w / 2;
    const kneeScale = w > 0 ? slope / (2 * w) : 0;
    for (let i = 0; i < frames; i++) {
      // The static curve of gain-computer.ts without branches (they cost
      // more than they save in V8): with x = over + W/2 clamped to [0, W],
      // slope·x²/(2W) is 0 below the knee, the quadratic inside it and
      // slope·W/2 above it, where slope·(over − W/2) adds the rest.
      // (fastLog2 of a silent frame's 0 is about −1026: far below the knee.)
      const over = fastLog2(power[i]) * LOG2_POWER_TO_DB - t;
      const x = Math.min(Math.max(over + hw, 0), w);
      out[i] = kneeScale * x * x + slope * Math.max(over - hw, 0);
    }
    const maxGr = this.smoother.process(out, out, frames);
    if (maxGr > this.maxReductionDb) this.maxReductionDb = maxGr;
  }

  /** Reduction (dB) → linear gain with makeup, in place. */
  private toLinearGain(gain: Float64Array, frames: number): void {
    const makeup = this.makeupDb;
    for (let i = 0; i < frames; i++) gain[i] = fastExp2((makeup - gain[i]) * DB_TO_LOG2_GAIN);
  }

  takeGainReductionDb(out: Float64Array): void {
    out[0] = this.maxReductionDb;
    this.maxReductionDb = 0;
  }
}

// Lookahead brickwall limiter.
// Per frame: peak p (sample peak, or true peak from an oversampling detector)
// → required gain r = min(1, ceiling/p) → running minimum over the lookahead
// window (+hold) → one-pole release (instant attack, so the envelope never
// exceeds the minimum) → boxcar average over lookahead+1 frames, which turns
// the step into a linear ramp that has fully reached r when the peak leaves
// the delay line (every value averaged is ≤ r). Audio is delayed by the
// lookahead plus the detector's latency, so the gain lines up with it.
// Output never exceeds the ceiling on the detected points; for true peak we
// leave TRUE_PEAK_MARGIN_DB so the BS.1770 meter of the output reads at or
// under the ceiling despite the gain changing between detected points.
// Each step runs as its own loop over the block (gain, detection, required
// gain, the running minimum, release and ramp, output): short loops V8
// compiles tightly, with the state in locals for the block.

import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import { dbToLinear, msToFrames, timeConstantCoeff } from "../units.ts";
import { SlidingMin } from "./sliding-min.ts";

export interface LimiterSettings {
  inputGainDb: number;
  ceilingDbtp: number;
  lookaheadMs: number;
  releaseMs: number;
  truePeak: boolean;
}

/** The shape of part of TruePeakDetector (dsp/loudness/true-peak.ts) we use. */
export interface PerFramePeakDetector {
  readonly latencyFrames: number;
  reset(): void;
  /** Exact per-frame peaks above exactAbove; at or under it, any value between the true one and exactAbove. */
  processPerFrame(channels: Planar, frames: number, outPeak: Float64Array, exactAbove?: number): void;
}

// Headroom below the ceiling; sample peak: float rounding only.
export const TRUE_PEAK_MARGIN_DB = 0.05;
export const SAMPLE_PEAK_MARGIN_DB = 1e-6;

export class Limiter implements Processor, GainReductionSource {
  readonly latencyFrames: number;
  readonly traceNames: readonly string[] = ["gr"];
  private inputGain: number;
  private ceiling: number;
  private readonly lookaheadFrames: number;
  private readonly delayFrames: number;
  private release: number;
  private readonly hold: SlidingMin;
  private readonly boxcar: Float64Array;
  private readonly boxLength: number;
  private boxIndex = 0;
  private boxSum = 0;
  private envelope = 1;
  private readonly delay: Float64Array[];
  private readonly peaks: Float64Array;
  private readonly gained: Float64Array[];
  private minGain = 1;

  constructor(
    sampleRate: number,
    readonly channels: number,
    settings: LimiterSettings,
    maxBlockFrames: number,
    private readonly detector: PerFramePeakDetector | null = null,
  ) {
    this.inputGain = dbToLinear(settings.inputGainDb);
    const marginDb = detector ? TRUE_PEAK_MARGIN_DB : SAMPLE_PEAK_MARGIN_DB;
    this.ceiling = dbToLinear(settings.ceilingDbtp - marginDb);
    this.lookaheadFrames = Math.max(1, msToFrames(settings.lookaheadMs, sampleRate));
    const detectorLatency = detector ? detector.latencyFrames : 0;
    this.delayFrames = this.lookaheadFrames + detectorLatency;
    this.latencyFrames = this.delayFrames;
    this.release = timeConstantCoeff(settings.releaseMs, sampleRate);
    this.boxLength = this.lookaheadFrames + 1;
    // True peak: hold one frame longer, so the frame after a detected peak is
    // not already released (its inter-sample points depend on both).
    this.hold = new SlidingMin(this.boxLength + (detector ? 1 : 0));
    this.boxcar = new Float64Array(this.boxLength);
    this.delay = Array.from({ length: channels }, () => new Float64Array(this.delayFrames + maxBlockFrames));
    this.peaks = new Float64Array(maxBlockFrames);
    this.gained = this.delay.map((d) => d.subarray(0, 0));
    this.reset();
  }

  /**
   * Live settings change (the listening desk): input gain, ceiling and
   * release, keeping the delay lines and envelopes. Lookahead and true-peak
   * detection size the memory: a change of those needs a new limiter.
   */
  setSettings(sampleRate: number, settings: LimiterSettings): void {
    this.inputGain = dbToLinear(settings.inputGainDb);
    this.ceiling = dbToLinear(settings.ceilingDbtp - (this.detector ? TRUE_PEAK_MARGIN_DB : SAMPLE_PEAK_MARGIN_DB));
    this.release = timeConstantCoeff(settings.releaseMs, sampleRate);
  }

  reset(): void {
    this.hold.reset();
    this.boxcar.fill(1);
    this.boxSum = this.boxLength;
    this.boxIndex = 0;
    this.envelope = 1;
    for (const d of this.delay) d.fill(0);
    this.detector?.reset();
    this.minGain = 1;
  }

  process(channels: Planar, frames: number): void {
    const nch = this.channels, delayFrames = this.delayFrames, g0 = this.inputGain;
    // The gained input goes only into the delay lines; detection reads it there.
    const gained = this.gained;
    for (let c = 0; c < nch; c++) {
      const x = channels[c];
      const line = this.delay[c];
      for (let i = 0; i < frames; i++) line[delayFrames + i] = x[i] * g0;
      gained[c] = line.subarray(delayFrames, delayFrames + frames);
    }
    const gain = this.peaks; // peaks, then required gains, then the held minimum, then the gain
    // The detector's points include the sample itself (its phase 0, at the detector's delay). Under
    // the ceiling the required gain is 1 whatever the peak, so only peaks above it need to be exact.
    if (this.detector) this.detector.processPerFrame(gained, frames, gain, this.ceiling);
    else {
      gain.fill(0, 0, frames);
      for (let c = 0; c < nch; c++) {
        const x = gained[c];
        for (let i = 0; i < frames; i++) {
          const a = Math.abs(x[i]);
          if (a > gain[i]) gain[i] = a;
        }
      }
    }
    const ceiling = this.ceiling;
    for (let i = 0; i < frames; i++) {
      const p = gain[i];
      gain[i] = p > ceiling ? ceiling / p : 1;
    }
    this.hold.pushBlock(gain, gain, frames);
    const rel = this.release, box = this.boxcar, boxLength = this.boxLength;
    let env = this.envelope, sum = this.boxSum, bi = this.boxIndex, minGain = this.minGain;
    for (let i = 0; i < frames; i++) {
      const h = gain[i];
      env = h < env ? h : h + rel * (env - h);
      sum += env - box[bi];
      box[bi] = env;
      if (++bi === boxLength) {
        bi = 0;
        // Re-add exactly once per window so rounding cannot accumulate.
        sum = 0;
        for (let k = 0; k < boxLength; k++) sum += box[k];
      }
      const g = sum / boxLength;
      gain[i] = g;
      if (g < minGain) minGain = g;
    }
    this.envelope = env;
    this.boxSum = sum;
    this.boxIndex = bi;
    this.minGain = minGain;
    for (let c = 0; c < nch; c++) {
      const x = channels[c];
      const line = this.delay[c];
      for (let i = 0; i < frames; i++) x[i] = line[i] * gain[i];
      line.copyWithin(0, frames, frames + delayFrames);
    }
  }

  takeGainReductionDb(out: Float64Array): void {
    out[0] = this.minGain < 1 ? -20 * Math.log10(this.minGain) : 0;
    this.minGain = 1;
  }
}

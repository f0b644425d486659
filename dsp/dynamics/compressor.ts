// Wideband RMS compressor (also one band of the multiband stage).
// Detector path: optional 2nd-order Butterworth high-pass (sidechain only,
// the audio is untouched) → stereo-linked RMS detector (max of the channels'
// mean squares) → static curve with soft knee → attack/release smoothing in
// dB (or the program-dependent "auto" release) → makeup. The same gain is
// applied to every channel, so the stereo image does not shift.
// Speed: each step is one tight loop over the block (sidechain filter and
// detector for both channels, static curve and smoothing, gain, audio); a
// block below the knee with the envelopes at rest skips from the detector
// straight to the makeup gain; the level (dB) and the gain use
// fastLog2 / fastExp2 (dsp/fast-math.ts, errors around 1e-12 dB), the
// per-frame logarithm and exponential having been most of the cost. (One
// loop for detector and static curve together measured slower in V8.)
//
// Control rate: when every time constant is at least CONTROL_MIN_TIME_MS
// (the usual bus and multiband settings), the static curve, the smoothing
// and the exponential run once every `controlFrames` frames (about
// 12 kHz: 4 frames at 44.1 or 48 kHz, 8 at 96 kHz) on the detector's power
// at the last frame of each group, and the linear gain is interpolated
// between successive control values, so it is continuous (no zipper
// steps). The gain then trails the detector by one control period (0.08 ms
// at 48 kHz, under 1% of the shortest time constant allowed on this path);
// the smoother runs with the exact one-pole coefficients for the control
// rate, so its step response keeps its time constants. Control points sit
// at fixed positions counted from the stream start: the block size never
// changes the result. Faster settings keep the per-frame path. The
// detector's one-pole still sees every frame, but is read only at group
// ends (rms-detector-control.ts: the recursion in closed form per group).
// Tests hold the control-rate path to a reference composed at the control
// rate (to 1e-12) and to the per-frame path (see compressor.test.ts).

import { fastExp2, fastLog2 } from "../fast-math.ts";
import type { GainReductionSource, Planar, Processor } from "../processor.ts";
import { AUTO_FAST_RELEASE_MS, GainSmoother } from "./gain-smoother.ts";
import { RmsDetector } from "./rms-detector.ts";
import { ControlRateRmsDetector } from "./rms-detector-control.ts";

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

/** Gain-control rate of the control-rate path. */
export const CONTROL_RATE_HZ = 12000;
/** The control-rate path is taken when attack, release (and for "auto" its fast release) are at least this long. */
export const CONTROL_MIN_TIME_MS = 10;

/** Frames per control step at a sample rate: 4 at 44.1 and 48 kHz, 8 at 96 kHz. */
export function controlFrames(sampleRate: number): number {
  return Math.max(1, Math.round(sampleRate / CONTROL_RATE_HZ));
}

/** Frames per control step for these settings: 1 (every frame) unless every time constant allows the control rate. */
export function controlFramesFor(settings: CompressorSettings, sampleRate: number): number {
  const release = settings.releaseMs === "auto" ? AUTO_FAST_RELEASE_MS : settings.releaseMs;
  return settings.attackMs >= CONTROL_MIN_TIME_MS && release >= CONTROL_MIN_TIME_MS ? controlFrames(sampleRate) : 1;
}

/** Whether `next` can be applied to a compressor built with `built` by setSettings (else it needs a new one). */
export function compressorLiveChangeable(built: CompressorSettings, next: CompressorSettings, sampleRate: number): boolean {
  return (
    built.rmsWindowMs === next.rmsWindowMs &&
    (built.sidechainHighPassHz ?? null) === (next.sidechainHighPassHz ?? null) &&
    (built.releaseMs === "auto") === (next.releaseMs === "auto") &&
    controlFramesFor(built, sampleRate) === controlFramesFor(next, sampleRate)
  );
}

export class Compressor implements Processor, GainReductionSource {
  readonly latencyFrames = 0;
  readonly traceNames: readonly string[] = ["gr"];
  /** The per-frame path's detector (null on the control-rate path). */
  private readonly detector: RmsDetector | null;
  /** The control-rate path's detector (null on the per-frame path). */
  private readonly controlDetector: ControlRateRmsDetector | null;
  private readonly maxScratch = new Float64Array(1);
  private readonly smoother: GainSmoother;
  private readonly power: Float64Array;
  private readonly gainBuffer: Float64Array;
  private threshold: number;
  private slope: number;
  private knee: number;
  private makeupDb: number;
  private makeupGain: number;
  private kneeStartPower: number;
  private maxReductionDb = 0;
  /** Frames per control step (1: the per-frame path). */
  readonly controlFrames: number;
  // Control-rate path: the control values of a block (dB, then linear gain),
  // the position of the next frame in its control group, and the last two
  // control values (the gain interpolates from `prev` to `cur`).
  private readonly controlDb: Float64Array;
  private readonly controlGain: Float64Array;
  private phase = 0;
  private prevDb = 0;
  private curDb = 0;
  private prevGain: number;
  private curGain: number;
  private pendingCount = 0;
  /** The last controlBlock() found the block at rest (see there). */
  private blockAtRest = false;

  constructor(
    sampleRate: number,
    readonly channels: number,
    settings: CompressorSettings,
    maxBlockFrames: number,
  ) {
    this.controlFrames = controlFramesFor(settings, sampleRate);
    const highPassHz = settings.sidechainHighPassHz ?? null;
    this.detector = this.controlFrames > 1 ? null : new RmsDetector(sampleRate, channels, settings.rmsWindowMs, highPassHz);
    this.controlDetector = this.controlFrames > 1 ? new ControlRateRmsDetector(sampleRate, channels, settings.rmsWindowMs, highPassHz, this.controlFrames) : null;
    // At the control rate the smoother steps once per group: its coefficients are those of the control rate.
    this.smoother = new GainSmoother(sampleRate / this.controlFrames, settings.attackMs, settings.releaseMs);
    const controlLength = this.controlFrames > 1 ? Math.ceil(maxBlockFrames / this.controlFrames) + 1 : 0;
    this.controlDb = new Float64Array(controlLength);
    this.controlGain = new Float64Array(controlLength);
    this.power = new Float64Array(this.controlFrames > 1 ? 0 : maxBlockFrames); // the per-frame detector's output
    this.gainBuffer = new Float64Array(maxBlockFrames);
    this.threshold = settings.thresholdDb;
    this.slope = 1 - 1 / settings.ratio;
    this.knee = settings.kneeDb;
    this.makeupDb = settings.makeupDb;
    this.makeupGain = 10 ** (this.makeupDb / 20);
    // A block whose power stays at or below this has no reduction at all.
    this.kneeStartPower = 10 ** ((this.threshold - this.knee / 2) / 10);
    this.prevGain = this.curGain = this.makeupGain;
  }

  /**
   * Live settings change (the listening desk): threshold, ratio, knee,
   * makeup, attack and release, keeping the detector and envelope state.
   * What the constructor fixes (the detector's window and side-chain
   * filter, fixed or "auto" release, the gain path of controlFramesFor)
   * needs a new compressor: see `compressorLiveChangeable`.
   */
  setSettings(sampleRate: number, settings: CompressorSettings): void {
    this.threshold = settings.thresholdDb;
    this.slope = 1 - 1 / settings.ratio;
    this.knee = settings.kneeDb;
    this.makeupDb = settings.makeupDb;
    this.makeupGain = 10 ** (this.makeupDb / 20);
    this.kneeStartPower = 10 ** ((this.threshold - this.knee / 2) / 10);
    this.smoother.setTimes(sampleRate / this.controlFrames, settings.attackMs, settings.releaseMs);
  }

  reset(): void {
    this.detector?.reset();
    this.controlDetector?.reset();
    this.smoother.reset();
    this.maxReductionDb = 0;
    this.phase = 0;
    this.prevDb = this.curDb = 0;
    this.prevGain = this.curGain = this.makeupGain;
  }

  /** Gain reduction (dB, ≥ 0) per frame into `outDb`, no audio change. */
  detect(channels: Planar, frames: number, outDb: Float64Array): void {
    if (this.controlFrames > 1) {
      const count = this.controlBlock(channels, frames);
      if (this.blockAtRest) outDb.fill(0, 0, frames);
      else this.interpolate(outDb, frames, this.controlDb, this.prevDb, this.curDb);
      this.advance(frames, count);
      return;
    }
    if (this.reduction(channels, frames, outDb)) outDb.fill(0, 0, frames);
  }

  /**
   * The control-rate path in two halves, for a caller that applies the gain
   * in a loop of its own (the multiband sum): beginControl runs the detector
   * and writes the block's control gains (one per group end, makeup
   * included) into `controlGains`; the caller interpolates from
   * controlPhase / controlPrevGain / controlCurGain exactly as gain() does
   * (g = prev + (cur − prev)·(1/k)·p for the p-th frame of a group, then on
   * to the next value); endControl then moves the state on. Only on the
   * control-rate path (controlFrames > 1).
   */
  beginControl(input: Planar, frames: number): void {
    const count = this.controlBlock(input, frames);
    // At rest: every value is the makeup gain (prev and cur are too).
    if (this.blockAtRest) this.controlGain.fill(this.makeupGain, 0, count);
    this.pendingCount = count;
  }

  endControl(frames: number): void {
    this.advance(frames, this.pendingCount);
  }

  get controlGains(): Float64Array {
    return this.controlGain;
  }

  get controlPhase(): number {
    return this.phase;
  }

  get controlPrevGain(): number {
    return this.prevGain;
  }

  get controlCurGain(): number {
    return this.curGain;
  }

  /** Linear gain per frame (makeup included) into `out`, no audio change. */
  gain(channels: Planar, frames: number, out: Float64Array): void {
    if (this.controlFrames > 1) {
      const count = this.controlBlock(channels, frames);
      if (this.blockAtRest) out.fill(this.makeupGain, 0, frames);
      else this.interpolate(out, frames, this.controlGain, this.prevGain, this.curGain);
      this.advance(frames, count);
      return;
    }
    if (this.reduction(channels, frames, out)) out.fill(this.makeupGain, 0, frames);
    else this.toLinearGain(out, frames);
  }

  process(channels: Planar, frames: number): void {
    if (this.controlFrames > 1 && this.channels === 2) {
      // Stereo: the gain interpolated and applied in one loop (gain()'s arithmetic).
      this.beginControl(channels, frames);
      applyInterpolated(channels[0], channels[1], frames, this.controlFrames, this.phase, this.prevGain, this.curGain, this.controlGain);
      this.endControl(frames);
      return;
    }
    if (this.controlFrames > 1) {
      const g = this.gainBuffer;
      this.gain(channels, frames, g);
      for (let c = 0; c < this.channels; c++) {
        const x = channels[c];
        for (let i = 0; i < frames; i++) x[i] *= g[i];
      }
      return;
    }
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
    const maxPower = this.detector!.process(input, frames, this.power);
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

  /**
   * Control-rate path: the detector over the block, then the control values
   * (dB into controlDb, linear gain with makeup into controlGain) at the
   * block's control frames, the last frame of each group; returns their
   * number. When the block stays below the knee with everything at rest
   * (no reduction anywhere) it sets blockAtRest and leaves the values alone:
   * the caller fills in the makeup gain, and advance() keeps the state.
   */
  private controlBlock(input: Planar, frames: number): number {
    const db = this.controlDb, gain = this.controlGain;
    const count = this.controlDetector!.process(input, frames, db, this.maxScratch);
    this.blockAtRest = !(this.maxScratch[0] > this.kneeStartPower) && this.smoother.atRest && this.prevDb === 0 && this.curDb === 0;
    if (this.blockAtRest) return count;
    this.reductionFromPower(db, count, db);
    const makeup = this.makeupDb;
    for (let j = 0; j < count; j++) gain[j] = fastExp2((makeup - db[j]) * DB_TO_LOG2_GAIN);
    return count;
  }

  /** Per frame: from prev to cur over each control group, then on to the next control value (one per completed group). */
  private interpolate(out: Float64Array, frames: number, values: Float64Array, prev: number, cur: number): void {
    const k = this.controlFrames, step = 1 / k;
    let i = 0, j = 0, p = this.phase;
    // Group by group: the rest of the current one, then whole ones, then the start of the last.
    while (i < frames) {
      const d = (cur - prev) * step;
      const n = Math.min(k - p, frames - i);
      for (let t = 1; t <= n; t++) out[i + t - 1] = prev + d * (p + t);
      i += n;
      p += n;
      if (p === k) {
        p = 0;
        prev = cur;
        cur = values[j++];
      }
    }
  }

  /** After a block: the group position and the last two control values (unchanged after a block at rest). */
  private advance(frames: number, count: number): void {
    this.phase = (this.phase + frames) % this.controlFrames;
    if (this.blockAtRest) return;
    if (count >= 2) {
      this.prevDb = this.controlDb[count - 2];
      this.curDb = this.controlDb[count - 1];
      this.prevGain = this.controlGain[count - 2];
      this.curGain = this.controlGain[count - 1];
    } else if (count === 1) {
      this.prevDb = this.curDb;
      this.curDb = this.controlDb[0];
      this.prevGain = this.curGain;
      this.curGain = this.controlGain[0];
    }
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

/** l, r ×= the interpolated control gain, group by group as Compressor.interpolate computes it. */
function applyInterpolated(l: Float64Array, r: Float64Array, frames: number, k: number, phase: number, prev: number, cur: number, values: Float64Array): void {
  const step = 1 / k;
  let i = 0, j = 0, p = phase;
  while (i < frames) {
    const d = (cur - prev) * step;
    const n = Math.min(k - p, frames - i);
    for (let t = 1; t <= n; t++) {
      const g = prev + d * (p + t), f = i + t - 1;
      l[f] *= g;
      r[f] *= g;
    }
    i += n;
    p += n;
    if (p === k) {
      p = 0;
      prev = cur;
      cur = values[j++];
    }
  }
}

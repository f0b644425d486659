// Wideband RMS compressor (also one band of the multiband stage).
// Detector path: optional 2nd-order Butterworth high-pass (sidechain only,
// the audio is untouched) → stereo-linked RMS detector (max of the channels'
// mean squares) → static curve with soft knee → attack/release smoothing in
// dB (or the program-dependent "auto" release) → makeup. The same gain is
// applied to every channel, so the stereo image does not shift.

import { designBiquad, BUTTERWORTH_Q } from "../filters/biquad-design.ts";
import { Biquad } from "../filters/biquad.ts";
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

// ln(10)/10 and ln(10)/20: dB conversions through Math.log/Math.exp, which
// are cheaper per frame than log10/pow.
const POWER_TO_DB = 10 / Math.LN10;
const DB_TO_GAIN = Math.LN10 / 20;
const TINY_POWER = 1e-30;

export class Compressor implements Processor, GainReductionSource {
  readonly latencyFrames = 0;
  readonly traceNames: readonly string[] = ["gr"];
  private readonly detector: RmsDetector;
  private readonly smoother: GainSmoother;
  private readonly sidechain: Biquad | null;
  private readonly sideBuffers: Float64Array[];
  private readonly power: Float64Array;
  private readonly gain: Float64Array;
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
    this.detector = new RmsDetector(sampleRate, channels, settings.rmsWindowMs);
    this.smoother = new GainSmoother(sampleRate, settings.attackMs, settings.releaseMs);
    const hp = settings.sidechainHighPassHz;
    this.sidechain = hp ? new Biquad(designBiquad("highPass", { freqHz: hp, q: BUTTERWORTH_Q }, sampleRate), channels) : null;
    this.sideBuffers = this.sidechain ? Array.from({ length: channels }, () => new Float64Array(maxBlockFrames)) : [];
    this.power = new Float64Array(maxBlockFrames);
    this.gain = new Float64Array(maxBlockFrames);
    this.threshold = settings.thresholdDb;
    this.slope = 1 - 1 / settings.ratio;
    this.knee = settings.kneeDb;
    this.makeupDb = settings.makeupDb;
    this.makeupGain = Math.exp(this.makeupDb * DB_TO_GAIN);
    this.kneeStartPower = Math.exp((this.threshold - this.knee / 2) / POWER_TO_DB);
  }

  reset(): void {
    this.detector.reset();
    this.smoother.reset();
    this.sidechain?.reset();
    this.maxReductionDb = 0;
  }

  /** Gain reduction (dB, ≥ 0) per frame into `outDb`, no audio change. */
  detect(channels: Planar, frames: number, outDb: Float64Array): void {
    let detectIn = channels;
    if (this.sidechain) {
      for (let c = 0; c < this.channels; c++) this.sideBuffers[c].set(channels[c].subarray(0, frames));
      this.sidechain.process(this.sideBuffers, frames);
      detectIn = this.sideBuffers;
    }
    const power = this.power;
    this.detector.process(detectIn, frames, power);
    const t = this.threshold, slope = this.slope, w = this.knee, hw = w / 2;
    const smoother = this.smoother;
    const kneeStartPower = this.kneeStartPower;
    let maxGr = this.maxReductionDb;
    for (let i = 0; i < frames; i++) {
      // Inlined gainReductionDb() (gain-computer.ts) for speed; below the
      // knee the target is 0 and the logarithm is skipped.
      const p = power[i];
      let target = 0;
      const over = p > kneeStartPower ? Math.log(p + TINY_POWER) * POWER_TO_DB - t : -Infinity;
      if (over > -hw) {
        if (over < hw) {
          const x = over + hw;
          target = (slope * x * x) / (2 * w);
        } else target = over * slope;
      }
      const gr = smoother.next(target);
      outDb[i] = gr;
      if (gr > maxGr) maxGr = gr;
    }
    this.maxReductionDb = maxGr;
  }

  /** Linear gain (makeup included) per frame into this.gain. */
  private computeGain(channels: Planar, frames: number): Float64Array {
    const gain = this.gain;
    this.detect(channels, frames, gain);
    const makeup = this.makeupDb, makeupGain = this.makeupGain;
    let lastGr = 0, lastGain = makeupGain;
    for (let i = 0; i < frames; i++) {
      const gr = gain[i];
      if (gr !== lastGr) {
        lastGr = gr;
        lastGain = gr === 0 ? makeupGain : Math.exp((makeup - gr) * DB_TO_GAIN);
      }
      gain[i] = lastGain;
    }
    return gain;
  }

  process(channels: Planar, frames: number): void {
    const gain = this.computeGain(channels, frames);
    for (let c = 0; c < this.channels; c++) {
      const x = channels[c];
      for (let i = 0; i < frames; i++) x[i] *= gain[i];
    }
  }

  /** Compresses `input` and adds the result to `out` (multiband summing); `input` is left as is. */
  processAdd(input: Planar, out: Planar, frames: number): void {
    const gain = this.computeGain(input, frames);
    for (let c = 0; c < this.channels; c++) {
      const x = input[c], y = out[c];
      for (let i = 0; i < frames; i++) y[i] += x[i] * gain[i];
    }
  }

  takeGainReductionDb(out: Float64Array): void {
    out[0] = this.maxReductionDb;
    this.maxReductionDb = 0;
  }
}

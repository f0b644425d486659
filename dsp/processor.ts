// The common shape of every processor in dsp/.
// Audio is planar: one Float64Array per channel (1 = mono, 2 = stereo).
// A processor is built from the sample rate and its settings, sizes its
// memory up front, and processes blocks in place without allocating.

export type Planar = Float64Array[];

export interface Processor {
  /** Frames of delay the processor adds (the render loop compensates it). */
  readonly latencyFrames: number;
  /** Clears internal state; keeps settings. */
  reset(): void;
  /** Processes `frames` frames of `channels` in place. */
  process(channels: Planar, frames: number): void;
}

/** A processor that reports gain reduction (positive dB) for traces. */
export interface GainReductionSource {
  /** Names of the traces this processor reports, e.g. ["gr"] or ["band1", "band2"]. */
  readonly traceNames: readonly string[];
  /** The largest gain reduction (dB, >= 0) of each trace since the last call; then resets the hold. */
  takeGainReductionDb(out: Float64Array): void;
}

// The desk's meter snapshot: one Float64Array written by the audio thread 30
// times a second (in a SharedArrayBuffer when the page is cross-origin
// isolated, else copied into a message) and read by the page. A seqlock
// guards it: M.seq is odd while a snapshot is being written.

export const M = {
  seq: 0,
  playing: 1,
  positionS: 2,
  momentaryLufs: 3,
  shortTermLufs: 4,
  integratedLufs: 5,
  truePeakDbtp: 6,
  oversCount: 7,
  correlation: 8,
  inputMomentaryLufs: 9,
  matchOffsetDb: 10,
  droppedBlocks: 11,
  lateBlocks: 12,
  /** The last limiter's current gain reduction (dB), or NaN without a limiter. */
  limiterGrDb: 13,
  listeningCompare: 14,
  bypassAll: 15,
  /** First trace: gr at TRACES + 2k, its peak hold at TRACES + 2k + 1, traces in chain order. */
  traces: 16,
} as const;

export const MAX_TRACES = 256;
export const METER_LENGTH = M.traces + 2 * MAX_TRACES;
/** Snapshots per second. */
export const METER_RATE_HZ = 30;
/** Peak hold of the gain-reduction meters. */
export const GR_PEAK_HOLD_S = 1.5;

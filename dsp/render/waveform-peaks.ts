// Waveform peaks of a finished render, computed once when it is rendered and
// stored, so a player can draw a 10-minute master without decoding it whole.
// Per column (an equal share of the file's frames), the lowest and highest
// sample of any channel, in whole steps of 1/127 of full scale, rounded away
// from zero so a peak is never drawn smaller than it is. The file is read a
// block at a time: memory does not grow with its length.
import { openWav } from "../io/wav-reader.ts";

/** Peaks as stored: `min[i]` and `max[i]` in −127…127 (127 = full scale) for column i. */
export type WaveformPeaks = { columns: number; frames: number; sampleRate: number; min: number[]; max: number[] };

export const PEAK_COLUMNS = 2000;
export const PEAK_SCALE = 127;

const quantize = (v: number) => Math.max(-PEAK_SCALE, Math.min(PEAK_SCALE, v < 0 ? Math.floor(v * PEAK_SCALE) : Math.ceil(v * PEAK_SCALE))) || 0;

/** Peaks of planar blocks fed in order; `frames` (the total) fixes each column's share. */
export class PeakAccumulator {
  private readonly lo: Float64Array;
  private readonly hi: Float64Array;
  private position = 0;

  constructor(
    private readonly frames: number,
    readonly columns: number = PEAK_COLUMNS,
  ) {
    this.columns = Math.max(1, Math.min(columns, Math.max(1, frames)));
    this.lo = new Float64Array(this.columns);
    this.hi = new Float64Array(this.columns);
  }

  add(channels: readonly Float64Array[], n: number): void {
    const perColumn = this.frames / this.columns;
    for (let i = 0; i < n; i++) {
      const column = Math.min(this.columns - 1, Math.floor((this.position + i) / perColumn));
      for (const ch of channels) {
        const v = ch[i];
        if (v < this.lo[column]) this.lo[column] = v;
        if (v > this.hi[column]) this.hi[column] = v;
      }
    }
    this.position += n;
  }

  result(sampleRate: number): WaveformPeaks {
    return { columns: this.columns, frames: this.frames, sampleRate, min: Array.from(this.lo, quantize), max: Array.from(this.hi, quantize) };
  }
}

/** Reads a WAV file once, a block at a time, and returns its peaks. */
export async function wavPeaks(path: string, columns = PEAK_COLUMNS): Promise<WaveformPeaks> {
  const reader = await openWav(path);
  try {
    const { frames, channels, sampleRate } = reader.format;
    const acc = new PeakAccumulator(frames, columns);
    const block = 16_384;
    const buffers = Array.from({ length: channels }, () => new Float64Array(block));
    for (;;) {
      const n = await reader.read(buffers, block);
      if (n === 0) break;
      acc.add(buffers, n);
    }
    return acc.result(sampleRate);
  } finally {
    await reader.close();
  }
}

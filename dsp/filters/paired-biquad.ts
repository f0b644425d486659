// One biquad section on several channels, two channels per loop: transposed
// direct form II, float64, the same arithmetic per channel as `Biquad`. The
// two channels' recurrences are independent, so the CPU overlaps them; that
// and the state held in local variables through a block roughly halve the
// cost per sample against one loop per channel.
//
// Flushing: state below FLUSH_BELOW is set to zero (silence must not decay
// into slow subnormal numbers). It is checked every FLUSH_INTERVAL_FRAMES
// frames counted from the start of the stream, not every sample and not at
// block ends, so the output never depends on the block size. Between two
// checks the state can fall at most from 1e-30 by the filter's own decay,
// far from the subnormal range (below 1e-308) for audio filters.

import type { BiquadCoeffs } from "./biquad-design.ts";

export const FLUSH_BELOW = 1e-30;
export const FLUSH_INTERVAL_FRAMES = 256;

export class PairedBiquad {
  private b0 = 1;
  private b1 = 0;
  private b2 = 0;
  private a1 = 0;
  private a2 = 0;
  /** s1, s2 of channel 0, then of channel 1, … */
  private readonly state: Float64Array;
  private untilFlush = FLUSH_INTERVAL_FRAMES;
  // Reused so the single-buffer calls allocate nothing.
  private readonly bufs: Float64Array[] = [new Float64Array(0), new Float64Array(0)];

  constructor(coeffs: BiquadCoeffs, readonly channels: number) {
    if (!(channels >= 1)) throw new RangeError(`channels must be at least 1, got ${channels}`);
    this.state = new Float64Array(2 * channels);
    this.setCoeffs(coeffs);
  }

  setCoeffs(c: BiquadCoeffs): void {
    this.b0 = c.b0;
    this.b1 = c.b1;
    this.b2 = c.b2;
    this.a1 = c.a1;
    this.a2 = c.a2;
  }

  reset(): void {
    this.state.fill(0);
    this.untilFlush = FLUSH_INTERVAL_FRAMES;
  }

  /** Filters channels[0 .. this.channels) in place. */
  process(channels: Float64Array[], frames: number): void {
    this.run(channels, channels, this.channels, frames, SAME);
  }

  /** Filters `input` into `output` (the input is left as is). */
  processInto(input: Float64Array[], output: Float64Array[], frames: number): void {
    this.run(input, output, this.channels, frames, SAME);
  }

  /** Filters one buffer in place with channel 0's state. */
  processChannel(buf: Float64Array, frames: number): void {
    this.bufs[0] = buf;
    this.run(this.bufs, this.bufs, 1, frames, SAME);
  }

  /** Converts a stereo pair to mid/side, filters the mid (or side) with channel 0's state, converts back. */
  processMidSide(left: Float64Array, right: Float64Array, frames: number, side: boolean): void {
    this.bufs[0] = left;
    this.bufs[1] = right;
    this.run(this.bufs, this.bufs, 1, frames, side ? SIDE : MID);
  }

  private run(input: Float64Array[], output: Float64Array[], n: number, frames: number, mode: number): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      if (mode === SAME) {
        let c = 0;
        for (; c + 1 < n; c += 2) this.pair(input[c], input[c + 1], output[c], output[c + 1], 2 * c, start, end);
        if (c < n) this.one(input[c], output[c], 2 * c, start, end);
      } else this.midSide(output[0], output[1], mode === SIDE, start, end);
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = FLUSH_INTERVAL_FRAMES;
        flushPairs(this.state);
      }
      start = end;
    }
  }

  private pair(xa: Float64Array, xb: Float64Array, ya: Float64Array, yb: Float64Array, o: number, start: number, end: number): void {
    const b0 = this.b0, b1 = this.b1, b2 = this.b2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3];
    for (let i = start; i < end; i++) {
      const x = xa[i], v = xb[i];
      const y = b0 * x + p1;
      p1 = b1 * x - a1 * y + p2;
      p2 = b2 * x - a2 * y;
      const w = b0 * v + q1;
      q1 = b1 * v - a1 * w + q2;
      q2 = b2 * v - a2 * w;
      ya[i] = y;
      yb[i] = w;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2;
  }

  private one(xa: Float64Array, ya: Float64Array, o: number, start: number, end: number): void {
    const b0 = this.b0, b1 = this.b1, b2 = this.b2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1];
    for (let i = start; i < end; i++) {
      const x = xa[i];
      const y = b0 * x + p1;
      p1 = b1 * x - a1 * y + p2;
      p2 = b2 * x - a2 * y;
      ya[i] = y;
    }
    st[o] = p1; st[o + 1] = p2;
  }

  // Same arithmetic as toMidSide / filter / fromMidSide in dsp/filters/mid-side.ts, in one loop.
  private midSide(l: Float64Array, r: Float64Array, side: boolean, start: number, end: number): void {
    const b0 = this.b0, b1 = this.b1, b2 = this.b2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[0], p2 = st[1];
    for (let i = start; i < end; i++) {
      const li = l[i], ri = r[i];
      let m = 0.5 * (li + ri);
      let s = 0.5 * (li - ri);
      const x = side ? s : m;
      const y = b0 * x + p1;
      p1 = b1 * x - a1 * y + p2;
      p2 = b2 * x - a2 * y;
      if (side) s = y;
      else m = y;
      l[i] = m + s;
      r[i] = m - s;
    }
    st[0] = p1; st[1] = p2;
  }
}

const SAME = 0, MID = 1, SIDE = 2;

/** Zeroes each channel's (s1, s2) pair when both are below FLUSH_BELOW (one alone can excite a limit cycle). */
export function flushPairs(state: Float64Array): void {
  for (let o = 0; o + 1 < state.length; o += 2) {
    if (Math.abs(state[o]) + Math.abs(state[o + 1]) < FLUSH_BELOW) {
      state[o] = 0;
      state[o + 1] = 0;
    }
  }
}

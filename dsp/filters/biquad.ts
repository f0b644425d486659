// Biquad filter processing: transposed direct form II, float64 state, one
// state pair per channel. State carries over between blocks, so the block
// size never changes the output.

import type { BiquadCoeffs } from "./biquad-design.ts";

// State below this is flushed to zero on every sample: it is inaudible
// (-600 dB) and keeps silence from decaying into slow subnormal numbers.
const FLUSH_BELOW = 1e-30;

export class Biquad {
  // b0 b1 b2 a1 a2 in a typed array: V8 keeps them as raw doubles.
  private readonly c = new Float64Array(5);
  private readonly s1: Float64Array;
  private readonly s2: Float64Array;

  constructor(coeffs: BiquadCoeffs, channels: number) {
    if (!(channels >= 1)) throw new RangeError(`channels must be at least 1, got ${channels}`);
    this.s1 = new Float64Array(channels);
    this.s2 = new Float64Array(channels);
    this.setCoeffs(coeffs);
  }

  get channels(): number {
    return this.s1.length;
  }

  /** Changes the response; keeps the state (no click from clearing it). */
  setCoeffs(c: BiquadCoeffs): void {
    this.c[0] = c.b0;
    this.c[1] = c.b1;
    this.c[2] = c.b2;
    this.c[3] = c.a1;
    this.c[4] = c.a2;
  }

  reset(): void {
    this.s1.fill(0);
    this.s2.fill(0);
  }

  /** Filters `frames` frames of every channel in place. */
  process(channels: ArrayLike<Float64Array | Float32Array>, frames: number): void {
    const n = Math.min(channels.length, this.s1.length);
    for (let ch = 0; ch < n; ch++) this.processChannel(channels[ch], ch, frames);
  }

  /** Filters one channel's buffer in place with that channel's state. */
  processChannel(buf: Float64Array | Float32Array, channel: number, frames: number): void {
    const c = this.c;
    const b0 = c[0], b1 = c[1], b2 = c[2], a1 = c[3], a2 = c[4];
    let s1 = this.s1[channel];
    let s2 = this.s2[channel];
    for (let i = 0; i < frames; i++) {
      const x = buf[i];
      const y = b0 * x + s1;
      s1 = b1 * x - a1 * y + s2;
      s2 = b2 * x - a2 * y;
      // Both at once: flushing one alone can excite a limit cycle. (This form of
      // the test, and `*= 0` keeping the doubles unboxed, is what V8 runs fastest.)
      if (Math.abs(s1) + Math.abs(s2) < FLUSH_BELOW) {
        s1 *= 0;
        s2 *= 0;
      }
      buf[i] = y;
    }
    this.s1[channel] = s1;
    this.s2[channel] = s2;
  }
}

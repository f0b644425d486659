// RMS level detector: a one-pole smoother of the mean square with time
// constant = the RMS window. Analytic step response: when x² jumps from 0 to
// P at frame 0, the mean square after frame n is P·(1 − a^(n+1)), a =
// exp(−1/(τ·fs)); it reaches 1 − 1/e of P at t = τ.
// Stereo link: the level is the MAX of the channels' mean squares, so a
// source panned to one side is controlled as firmly as a centred one.
// Optional high-pass before squaring (the compressor's sidechain filter):
// the RBJ 2nd-order Butterworth high-pass in transposed direct form II, run
// in the same loop as the mean square (one pass over the block, and the
// filter's and the smoother's dependency chains overlap).
// Flushing, like PairedBiquad's, every FLUSH_INTERVAL_FRAMES frames from the
// start of the stream (so the block size never changes the result): filter
// state below 1e-30 and mean squares below 1e-60 (−600 dB) become 0, so
// silence never decays into slow subnormal numbers.

import { BUTTERWORTH_Q, designBiquad } from "../filters/biquad-design.ts";
import { FLUSH_INTERVAL_FRAMES, flushPairs } from "../filters/paired-biquad.ts";
import { timeConstantCoeff } from "../units.ts";

const FLUSH_POWER_BELOW = 1e-60;

export class RmsDetector {
  readonly coeff: number;
  private readonly meanSquare: Float64Array;
  private readonly hasHighPass: boolean;
  private readonly b0: number;
  private readonly b1: number;
  private readonly b2: number;
  private readonly a1: number;
  private readonly a2: number;
  /** High-pass s1, s2 per channel. */
  private readonly filterState: Float64Array;
  private untilFlush = FLUSH_INTERVAL_FRAMES;

  constructor(sampleRate: number, channels: number, windowMs: number, highPassHz: number | null = null) {
    this.coeff = timeConstantCoeff(windowMs, sampleRate);
    this.meanSquare = new Float64Array(channels);
    this.hasHighPass = !!highPassHz;
    const c = highPassHz ? designBiquad("highPass", { freqHz: highPassHz, q: BUTTERWORTH_Q }, sampleRate) : { b0: 1, b1: 0, b2: 0, a1: 0, a2: 0 };
    this.b0 = c.b0;
    this.b1 = c.b1;
    this.b2 = c.b2;
    this.a1 = c.a1;
    this.a2 = c.a2;
    this.filterState = new Float64Array(2 * channels);
  }

  reset(): void {
    this.meanSquare.fill(0);
    this.filterState.fill(0);
    this.untilFlush = FLUSH_INTERVAL_FRAMES;
  }

  /**
   * Writes the linked mean square (linear power) of each frame into `out`;
   * returns the block's largest (the compressor skips a block that stays
   * below its knee).
   */
  process(channels: Float64Array[], frames: number, out: Float64Array): number {
    const stereo = channels.length === 2;
    let max = 0;
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      const m = !stereo ? this.perChannel(channels, out, start, end)
        : this.hasHighPass ? this.stereoHighPass(channels[0], channels[1], out, start, end)
        : this.stereo(channels[0], channels[1], out, start, end);
      if (m > max) max = m;
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = FLUSH_INTERVAL_FRAMES;
        flushPairs(this.filterState);
        const ms = this.meanSquare;
        for (let c = 0; c < ms.length; c++) if (ms[c] < FLUSH_POWER_BELOW) ms[c] = 0;
      }
      start = end;
    }
    return max;
  }

  private stereo(l: Float64Array, r: Float64Array, out: Float64Array, start: number, end: number): number {
    const a = this.coeff, b = 1 - a;
    const ms = this.meanSquare;
    let m0 = ms[0], m1 = ms[1];
    let max = 0;
    for (let i = start; i < end; i++) {
      const x = l[i], y = r[i];
      m0 = a * m0 + b * x * x;
      m1 = a * m1 + b * y * y;
      const m = Math.max(m0, m1);
      out[i] = m;
      max = Math.max(max, m);
    }
    ms[0] = m0; ms[1] = m1;
    return max;
  }

  /**
   * The stereo loop with the high-pass. The Butterworth high-pass has
   * b1 = −2·b0 and b2 = b0, so with g·x computed once each update needs two
   * multiplies, and the sum is ordered with the product of the new output
   * last: the loop runs at the speed of the filter's dependency chain, which
   * this shortens from four operations to three. (Rounding therefore
   * differs from Biquad's in the last bits; the mono loop below is Biquad's
   * arithmetic.)
   */
  private stereoHighPass(l: Float64Array, r: Float64Array, out: Float64Array, start: number, end: number): number {
    const a = this.coeff, b = 1 - a;
    const g = this.b0, a1 = this.a1, a2 = this.a2;
    const ms = this.meanSquare, st = this.filterState;
    let m0 = ms[0], m1 = ms[1];
    let p1 = st[0], p2 = st[1], q1 = st[2], q2 = st[3];
    let max = 0;
    for (let i = start; i < end; i++) {
      const gu = g * l[i], gv = g * r[i];
      const x = gu + p1;
      p1 = p2 - gu - gu - a1 * x;
      p2 = gu - a2 * x;
      const y = gv + q1;
      q1 = q2 - gv - gv - a1 * y;
      q2 = gv - a2 * y;
      m0 = a * m0 + b * x * x;
      m1 = a * m1 + b * y * y;
      const m = Math.max(m0, m1);
      out[i] = m;
      max = Math.max(max, m);
    }
    ms[0] = m0; ms[1] = m1;
    st[0] = p1; st[1] = p2; st[2] = q1; st[3] = q2;
    return max;
  }

  /** Any channel count, one channel per loop (the filter is the identity without a high-pass). */
  private perChannel(channels: Float64Array[], out: Float64Array, start: number, end: number): number {
    const a = this.coeff, b = 1 - a;
    const b0 = this.b0, b1 = this.b1, b2 = this.b2, a1 = this.a1, a2 = this.a2;
    const ms = this.meanSquare, st = this.filterState;
    out.fill(0, start, end);
    for (let c = 0; c < channels.length; c++) {
      const xs = channels[c];
      let m = ms[c], p1 = st[2 * c], p2 = st[2 * c + 1];
      for (let i = start; i < end; i++) {
        const u = xs[i];
        const x = b0 * u + p1;
        p1 = b1 * u - a1 * x + p2;
        p2 = b2 * u - a2 * x;
        m = a * m + b * x * x;
        if (m > out[i]) out[i] = m;
      }
      ms[c] = m;
      st[2 * c] = p1;
      st[2 * c + 1] = p2;
    }
    let max = 0;
    for (let i = start; i < end; i++) if (out[i] > max) max = out[i];
    return max;
  }
}

// RMS level detector: a one-pole smoother of the mean square with time
// constant = the RMS window. Analytic step response: when x² jumps from 0 to
// P at frame 0, the mean square after frame n is P·(1 − a^(n+1)), a =
// exp(−1/(τ·fs)); it reaches 1 − 1/e of P at t = τ.
// Stereo link: the level is the MAX of the channels' mean squares, so a
// source panned to one side is controlled as firmly as a centred one.

import { timeConstantCoeff } from "../units.ts";

export class RmsDetector {
  readonly coeff: number;
  private readonly meanSquare: Float64Array;

  constructor(sampleRate: number, channels: number, windowMs: number) {
    this.coeff = timeConstantCoeff(windowMs, sampleRate);
    this.meanSquare = new Float64Array(channels);
  }

  reset(): void {
    this.meanSquare.fill(0);
  }

  /**
   * Writes the linked mean square (linear power) of each frame into `out`;
   * returns the block's largest (the compressor skips a block that stays
   * below its knee).
   */
  process(channels: Float64Array[], frames: number, out: Float64Array): number {
    const a = this.coeff;
    const b = 1 - a;
    const ms = this.meanSquare;
    let max = 0;
    if (channels.length === 2) {
      const l = channels[0], r = channels[1];
      let m0 = ms[0], m1 = ms[1];
      for (let i = 0; i < frames; i++) {
        const x = l[i], y = r[i];
        m0 = a * m0 + b * x * x;
        m1 = a * m1 + b * y * y;
        const m = m0 > m1 ? m0 : m1;
        out[i] = m;
        if (m > max) max = m;
      }
      ms[0] = m0; ms[1] = m1;
      return max;
    }
    out.fill(0, 0, frames);
    for (let c = 0; c < channels.length; c++) {
      const x = channels[c];
      let m = ms[c];
      for (let i = 0; i < frames; i++) {
        m = a * m + b * x[i] * x[i];
        if (m > out[i]) out[i] = m;
      }
      ms[c] = m;
    }
    for (let i = 0; i < frames; i++) if (out[i] > max) max = out[i];
    return max;
  }
}

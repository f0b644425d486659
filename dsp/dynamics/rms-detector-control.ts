// The RMS detector of rms-detector.ts for the compressor's control-rate
// path: the same one-pole mean square (and optional sidechain high-pass),
// but the linked power is produced only at the last frame of each group of
// k frames, which is all that path reads. Per group, in closed form:
//   m ← aᵏ·m + Σₜ (1 − a)·aᵏ⁻ᵗ·x²ₜ   (t = 1 … k)
// equal to k steps of m ← a·m + (1 − a)·x² up to rounding (a test holds
// the two within 1e-12). What it saves: the per-frame recursion is a chain
// of a multiply and an add from one frame to the next, which bounded the
// per-frame detector; here the chain advances once per group, and the
// per-frame stores and maxima are gone. The sum for a group is carried
// across blocks term by term, so the block size never changes the result;
// flushing (state below 1e-30, mean squares below 1e-60) happens at group
// ends, every ceil(FLUSH_INTERVAL_FRAMES / k) groups from the stream start.

import { BUTTERWORTH_Q, designBiquad } from "../filters/biquad-design.ts";
import { FLUSH_BELOW, FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { timeConstantCoeff } from "../units.ts";

const FLUSH_POWER_BELOW = 1e-60;

export class ControlRateRmsDetector {
  readonly groupFrames: number;
  private readonly decay: number; // aᵏ
  private readonly weights: Float64Array; // weights[t] = (1 − a)·aᵏ⁻¹⁻ᵗ for the group's frame t (0-based)
  private readonly meanSquare: Float64Array;
  private readonly squares: Float64Array; // per channel, the current group's squared (filtered) inputs so far
  private position = 0; // frames of the current group already summed
  private readonly hasHighPass: boolean;
  private readonly g: number;
  private readonly a1: number;
  private readonly a2: number;
  private readonly filterState: Float64Array;
  private readonly flushGroups: number;
  private untilFlush: number;

  constructor(sampleRate: number, private readonly channels: number, windowMs: number, highPassHz: number | null, groupFrames: number) {
    const a = timeConstantCoeff(windowMs, sampleRate);
    this.groupFrames = groupFrames;
    this.decay = a ** groupFrames;
    this.weights = Float64Array.from({ length: groupFrames }, (_, t) => (1 - a) * a ** (groupFrames - 1 - t));
    this.meanSquare = new Float64Array(channels);
    this.squares = new Float64Array(channels * groupFrames);
    this.hasHighPass = !!highPassHz;
    // The RBJ Butterworth high-pass: b0 = g, b1 = −2g, b2 = g (as in RmsDetector's stereo loop).
    const c = highPassHz ? designBiquad("highPass", { freqHz: highPassHz, q: BUTTERWORTH_Q }, sampleRate) : null;
    this.g = c ? c.b0 : 1;
    this.a1 = c ? c.a1 : 0;
    this.a2 = c ? c.a2 : 0;
    this.filterState = new Float64Array(2 * channels);
    this.flushGroups = Math.ceil(FLUSH_INTERVAL_FRAMES / groupFrames);
    this.untilFlush = this.flushGroups;
  }

  reset(): void {
    this.meanSquare.fill(0);
    this.squares.fill(0);
    this.filterState.fill(0);
    this.position = 0;
    this.untilFlush = this.flushGroups;
  }

  /**
   * Feeds `frames` frames; writes the linked mean square (max over channels)
   * at each group end in the block into `out` (in order) and returns how
   * many, with their maximum in `maxOut[0]`.
   */
  process(input: Float64Array[], frames: number, out: Float64Array, maxOut: Float64Array): number {
    const k = this.groupFrames, w = this.weights, nch = this.channels, decay = this.decay;
    const ms = this.meanSquare, st = this.filterState;
    const hp = this.hasHighPass, g = this.g, a1 = this.a1, a2 = this.a2;
    let count = 0, max = 0;
    let i = 0;
    // The common cases written out: stereo, whole groups of four, the sum as
    // a tree. (A group a previous block left open goes to the loop below.)
    if (nch === 2 && k === 4 && this.position === 0 && !hp) {
      const w0 = w[0], w1 = w[1], w2 = w[2], w3 = w[3];
      const l = input[0], r = input[1];
      let mL = ms[0], mR = ms[1];
      let flushIn = this.untilFlush;
      for (; i + 4 <= frames; i += 4) {
        const a0 = l[i], a1_ = l[i + 1], a2_ = l[i + 2], a3 = l[i + 3];
        const b0 = r[i], b1 = r[i + 1], b2 = r[i + 2], b3 = r[i + 3];
        // groupSum's arithmetic for k = 4.
        mL = decay * mL + ((w0 * (a0 * a0) + w1 * (a1_ * a1_)) + (w2 * (a2_ * a2_) + w3 * (a3 * a3)));
        mR = decay * mR + ((w0 * (b0 * b0) + w1 * (b1 * b1)) + (w2 * (b2 * b2) + w3 * (b3 * b3)));
        const m = mL > mR ? mL : mR;
        out[count++] = m;
        if (m > max) max = m;
        if (--flushIn === 0) {
          flushIn = this.flushGroups;
          if (mL < FLUSH_POWER_BELOW) mL = 0;
          if (mR < FLUSH_POWER_BELOW) mR = 0;
        }
      }
      this.untilFlush = flushIn;
      ms[0] = mL;
      ms[1] = mR;
    } else if (nch === 2 && k === 4 && this.position === 0) {
      // The same with the sidechain high-pass (its arithmetic as in the loop below), both channels interleaved.
      const w0 = w[0], w1 = w[1], w2 = w[2], w3 = w[3];
      const l = input[0], r = input[1];
      let mL = ms[0], mR = ms[1];
      let p1 = st[0], p2 = st[1], q1 = st[2], q2 = st[3];
      let flushIn = this.untilFlush;
      for (; i + 4 <= frames; i += 4) {
        let gu = g * l[i], gv = g * r[i];
        const y0 = gu + p1; p1 = p2 - gu - gu - a1 * y0; p2 = gu - a2 * y0;
        const z0 = gv + q1; q1 = q2 - gv - gv - a1 * z0; q2 = gv - a2 * z0;
        gu = g * l[i + 1]; gv = g * r[i + 1];
        const y1 = gu + p1; p1 = p2 - gu - gu - a1 * y1; p2 = gu - a2 * y1;
        const z1 = gv + q1; q1 = q2 - gv - gv - a1 * z1; q2 = gv - a2 * z1;
        gu = g * l[i + 2]; gv = g * r[i + 2];
        const y2 = gu + p1; p1 = p2 - gu - gu - a1 * y2; p2 = gu - a2 * y2;
        const z2 = gv + q1; q1 = q2 - gv - gv - a1 * z2; q2 = gv - a2 * z2;
        gu = g * l[i + 3]; gv = g * r[i + 3];
        const y3 = gu + p1; p1 = p2 - gu - gu - a1 * y3; p2 = gu - a2 * y3;
        const z3 = gv + q1; q1 = q2 - gv - gv - a1 * z3; q2 = gv - a2 * z3;
        mL = decay * mL + ((w0 * (y0 * y0) + w1 * (y1 * y1)) + (w2 * (y2 * y2) + w3 * (y3 * y3)));
        mR = decay * mR + ((w0 * (z0 * z0) + w1 * (z1 * z1)) + (w2 * (z2 * z2) + w3 * (z3 * z3)));
        const m = mL > mR ? mL : mR;
        out[count++] = m;
        if (m > max) max = m;
        if (--flushIn === 0) {
          flushIn = this.flushGroups;
          if (mL < FLUSH_POWER_BELOW) mL = 0;
          if (mR < FLUSH_POWER_BELOW) mR = 0;
          if (Math.abs(p1) + Math.abs(p2) < FLUSH_BELOW) p1 = p2 = 0;
          if (Math.abs(q1) + Math.abs(q2) < FLUSH_BELOW) q1 = q2 = 0;
        }
      }
      this.untilFlush = flushIn;
      ms[0] = mL;
      ms[1] = mR;
      st[0] = p1; st[1] = p2; st[2] = q1; st[3] = q2;
    }
    // Any other case: the group's squares are kept (carried across blocks)
    // and summed at the group's end by groupSum, the same arithmetic as the
    // written-out loop above, so results do not depend on where blocks end.
    const sq = this.squares;
    while (i < frames) {
      const n = Math.min(k - this.position, frames - i);
      const t0 = this.position;
      for (let c = 0; c < nch; c++) {
        const x = input[c], o = c * k + t0;
        if (hp) {
          let p1 = st[2 * c], p2 = st[2 * c + 1];
          for (let t = 0; t < n; t++) {
            const gu = g * x[i + t];
            const y = gu + p1;
            p1 = p2 - gu - gu - a1 * y;
            p2 = gu - a2 * y;
            sq[o + t] = y * y;
          }
          st[2 * c] = p1;
          st[2 * c + 1] = p2;
        } else {
          for (let t = 0; t < n; t++) {
            const v = x[i + t];
            sq[o + t] = v * v;
          }
        }
      }
      i += n;
      this.position += n;
      if (this.position === k) {
        this.position = 0;
        let m = 0;
        for (let c = 0; c < nch; c++) {
          const v = decay * ms[c] + groupSum(sq, c * k, w, k);
          ms[c] = v;
          if (v > m) m = v;
        }
        out[count++] = m;
        if (m > max) max = m;
        if (--this.untilFlush === 0) {
          this.untilFlush = this.flushGroups;
          for (let c = 0; c < nch; c++) if (ms[c] < FLUSH_POWER_BELOW) ms[c] = 0;
          for (let o = 0; o + 1 < st.length; o += 2) if (Math.abs(st[o]) + Math.abs(st[o + 1]) < FLUSH_BELOW) st[o] = st[o + 1] = 0;
        }
      }
    }
    maxOut[0] = max;
    return count;
  }
}

/** Σ w[t]·sq[o + t]: as a tree for k = 4 (the written-out loop's order), in order otherwise. */
function groupSum(sq: Float64Array, o: number, w: Float64Array, k: number): number {
  if (k === 4) return (w[0] * sq[o] + w[1] * sq[o + 1]) + (w[2] * sq[o + 2] + w[3] * sq[o + 3]);
  let acc = 0;
  for (let t = 0; t < k; t++) acc += w[t] * sq[o + t];
  return acc;
}

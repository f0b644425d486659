// Attack/release smoothing of the gain reduction, one-pole in dB: the attack
// coefficient while the reduction grows, the release coefficient while it
// falls. A step in the target reaches 1 − 1/e of its size after the set time.
//
// releaseMs "auto" (program-dependent release, see docs/auto-release.md):
// two envelopes run side by side.
//   fast: attack = attackMs, release = AUTO_FAST_RELEASE_MS
//   slow: attack = AUTO_SLOW_ATTACK_MS, release = AUTO_SLOW_RELEASE_MS
// The output is max(fast, slow). A short transient barely charges the slow
// envelope, so the fast one sets the recovery; sustained reduction charges
// the slow one, which then holds the floor and recovers slowly, so bus
// compression does not pump.

import { timeConstantCoeff } from "../units.ts";

export const AUTO_FAST_RELEASE_MS = 40;
export const AUTO_SLOW_ATTACK_MS = 300;
export const AUTO_SLOW_RELEASE_MS = 2500;

// Reductions below this (dB) are flushed to 0: inaudible, and it lets the
// compressor skip the gain computation once fully released.
const FLUSH_BELOW_DB = 1e-9;

export class GainSmoother {
  private attackCoeff: number;
  private releaseCoeff: number;
  /** The slow envelope's coefficients; 1 and 1 (frozen at 0) unless releaseMs is "auto". */
  private readonly slowAttackCoeff: number;
  private readonly slowReleaseCoeff: number;
  private readonly fixedRelease: boolean;
  private fastDb = 0;
  private slowDb = 0;
  private readonly one = new Float64Array(1);

  constructor(sampleRate: number, attackMs: number, releaseMs: number | "auto") {
    const auto = releaseMs === "auto";
    this.fixedRelease = !auto;
    this.attackCoeff = timeConstantCoeff(attackMs, sampleRate);
    this.releaseCoeff = timeConstantCoeff(auto ? AUTO_FAST_RELEASE_MS : (releaseMs as number), sampleRate);
    // A coefficient of 1 keeps the envelope where it is: 1·0 + 0·t = 0
    // exactly, so with a fixed release the slow envelope stays 0 and
    // max(fast, slow) = fast; `process` then runs the fast envelope alone.
    this.slowAttackCoeff = auto ? timeConstantCoeff(AUTO_SLOW_ATTACK_MS, sampleRate) : 1;
    this.slowReleaseCoeff = auto ? timeConstantCoeff(AUTO_SLOW_RELEASE_MS, sampleRate) : 1;
  }

  /**
   * Live change of the time constants (the listening desk), keeping both
   * envelopes. The release mode (fixed or "auto") is the constructor's: a
   * change of mode needs a new smoother.
   */
  setTimes(sampleRate: number, attackMs: number, releaseMs: number | "auto"): void {
    this.attackCoeff = timeConstantCoeff(attackMs, sampleRate);
    this.releaseCoeff = timeConstantCoeff(releaseMs === "auto" ? AUTO_FAST_RELEASE_MS : releaseMs, sampleRate);
  }

  reset(): void {
    this.fastDb = 0;
    this.slowDb = 0;
  }

  /** True when both envelopes are at 0: a block of zero targets then leaves them there and outputs zeros. */
  get atRest(): boolean {
    return this.fastDb === 0 && this.slowDb === 0;
  }

  /** One frame: target reduction (dB, ≥ 0) → smoothed reduction (dB). */
  next(targetDb: number): number {
    this.one[0] = targetDb;
    this.process(this.one, this.one, 1);
    return this.one[0];
  }

  /**
   * A block: target reductions (dB, ≥ 0) → smoothed reductions (dB); `outDb`
   * may be `targetDb`. Returns the block's largest smoothed reduction.
   */
  process(targetDb: Float64Array, outDb: Float64Array, frames: number): number {
    const att = this.attackCoeff, rel = this.releaseCoeff;
    const slowAtt = this.slowAttackCoeff, slowRel = this.slowReleaseCoeff;
    const att1 = 1 - att, rel1 = 1 - rel, slowAtt1 = 1 - slowAtt, slowRel1 = 1 - slowRel;
    let fast = this.fastDb, slow = this.slowDb;
    let max = 0;
    if (this.fixedRelease) {
      // The slow envelope stays 0 (see the constructor): the fast one alone.
      for (let i = 0; i < frames; i++) {
        const t = targetDb[i];
        fast = t > fast ? att * fast + att1 * t : rel * fast + rel1 * t;
        if (fast < FLUSH_BELOW_DB) fast = 0;
        outDb[i] = fast;
        max = Math.max(max, fast);
      }
      this.fastDb = fast;
      return max;
    }
    for (let i = 0; i < frames; i++) {
      const t = targetDb[i];
      // y = c·y + (1 − c)·t: the same one-pole as t + c·(y − t), with one
      // operation less between one frame's y and the next (the loop's
      // critical path).
      fast = t > fast ? att * fast + att1 * t : rel * fast + rel1 * t;
      if (fast < FLUSH_BELOW_DB) fast = 0;
      slow = t > slow ? slowAtt * slow + slowAtt1 * t : slowRel * slow + slowRel1 * t;
      if (slow < FLUSH_BELOW_DB) slow = 0;
      const out = Math.max(fast, slow);
      outDb[i] = out;
      max = Math.max(max, out);
    }
    this.fastDb = fast;
    this.slowDb = slow;
    return max;
  }
}

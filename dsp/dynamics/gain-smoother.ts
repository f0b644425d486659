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
  private readonly attack: number;
  private readonly release: number;
  private readonly auto: boolean;
  private readonly slowAttack: number;
  private readonly slowRelease: number;
  private fastDb = 0;
  private slowDb = 0;

  constructor(sampleRate: number, attackMs: number, releaseMs: number | "auto") {
    this.attack = timeConstantCoeff(attackMs, sampleRate);
    this.auto = releaseMs === "auto";
    this.release = timeConstantCoeff(this.auto ? AUTO_FAST_RELEASE_MS : (releaseMs as number), sampleRate);
    this.slowAttack = timeConstantCoeff(AUTO_SLOW_ATTACK_MS, sampleRate);
    this.slowRelease = timeConstantCoeff(AUTO_SLOW_RELEASE_MS, sampleRate);
  }

  reset(): void {
    this.fastDb = 0;
    this.slowDb = 0;
  }

  /** One frame: target reduction (dB, ≥ 0) → smoothed reduction (dB). */
  next(targetDb: number): number {
    const f = this.fastDb;
    const cf = targetDb > f ? this.attack : this.release;
    let fast = targetDb + cf * (f - targetDb);
    if (fast < FLUSH_BELOW_DB) fast = 0;
    this.fastDb = fast;
    if (!this.auto) return fast;
    const s = this.slowDb;
    const cs = targetDb > s ? this.slowAttack : this.slowRelease;
    let slow = targetDb + cs * (s - targetDb);
    if (slow < FLUSH_BELOW_DB) slow = 0;
    this.slowDb = slow;
    return fast > slow ? fast : slow;
  }
}

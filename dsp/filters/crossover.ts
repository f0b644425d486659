// Linkwitz-Riley 4th-order crossovers and a band splitter for 1–4 crossover
// points (2–5 bands).
//
// LR4 = two cascaded 2nd-order Butterworth sections (Q = 1/√2). Low + high of
// one LR4 crossover is the 2nd-order all-pass at the same frequency with
// Q = 1/√2 (analogue: (1+s⁴)/B(s)² = (s²−√2s+1)/(s²+√2s+1); the bilinear
// transform keeps the identity, and the cookbook designs share one
// prewarped frequency). So a split computes low = LP²(x) and the all-pass
// A(x), and high = A(x) − low: three sections per sample instead of four.
//
// The bands must all carry the same phase, so that they sum to an all-pass:
// every band passes through the all-pass of each crossover that did not
// split it. The splitter is a balanced tree: it splits at the middle
// crossover first, then gives the lower half the all-passes of the upper
// half's crossovers (and the reverse) before splitting each half again.
// With 90 / 1000 / 3000 Hz: split at 1 kHz; low half through A(3 kHz) and
// split at 90 Hz; high half through A(90 Hz) and split at 3 kHz — 3 splits
// and 2 all-passes per channel (a chain of splits from the bottom needs 3).
// The sum of the bands is the product of all the crossovers' all-passes:
// flat magnitude. Each compensation all-pass runs in the loop of the split
// that follows it where there is one.

import { type BiquadCoeffs, BUTTERWORTH_Q, designBiquad } from "./biquad-design.ts";
import { FLUSH_INTERVAL_FRAMES, flushPairs, PairedBiquad } from "./paired-biquad.ts";

export interface LinkwitzRileyCoeffs {
  /** One Butterworth section; LR4 runs it twice. */
  lowPass: BiquadCoeffs;
  highPass: BiquadCoeffs;
  /** The all-pass equal to low + high. */
  allPass: BiquadCoeffs;
}

export function designLinkwitzRiley4(crossoverHz: number, sampleRate: number): LinkwitzRileyCoeffs {
  const p = { freqHz: crossoverHz, q: BUTTERWORTH_Q };
  return {
    lowPass: designBiquad("lowPass", p, sampleRate),
    highPass: designBiquad("highPass", p, sampleRate),
    allPass: designBiquad("allPass", p, sampleRate),
  };
}

/**
 * One LR4 crossover: low = LP²(x) into `low`, x becomes high = A(x) − low
 * (in place). The Butterworth low-pass is g·(1 + z⁻¹)²/D(z) and the all-pass
 * (a2 + a1 z⁻¹ + z⁻²)/D(z) with the same D(z) = 1 + a1 z⁻¹ + a2 z⁻²; both
 * low-pass sections' gain g² is applied to the input once. Optionally the
 * input first passes through one compensation all-pass (of another
 * crossover) in the same loop. Transposed direct form II, float64, the sum
 * in each state update ordered so that the product with the new output comes
 * last (shorter dependency chain from one frame to the next). One channel per
 * loop: three or four sections already keep the CPU busy, and two channels
 * would not fit V8's registers.
 */
class Lr4Split {
  private readonly gain2: number;
  private readonly a1: number;
  private readonly a2: number;
  /** The all-pass run before the split, or 0, 0 for none. */
  private readonly pre1: number;
  private readonly pre2: number;
  private readonly hasPre: boolean;
  private readonly state: Float64Array; // per channel: LP, LP, A, pre-all-pass × (s1, s2)
  private untilFlush = FLUSH_INTERVAL_FRAMES;

  constructor(coeffs: LinkwitzRileyCoeffs, private readonly channels: number, preAllPass: BiquadCoeffs | null) {
    const { lowPass: l, allPass: a } = coeffs;
    // The cookbook low-pass and all-pass share a1, a2 exactly (same formulas),
    // and the low-pass has b1 = 2·b0, b2 = b0; the all-pass b0 = a2, b1 = a1, b2 = 1.
    this.gain2 = l.b0 * l.b0;
    this.a1 = a.a1;
    this.a2 = a.a2;
    this.hasPre = preAllPass !== null;
    this.pre1 = preAllPass ? preAllPass.a1 : 0;
    this.pre2 = preAllPass ? preAllPass.a2 : 0;
    this.state = new Float64Array(8 * channels);
  }

  reset(): void {
    this.state.fill(0);
    this.untilFlush = FLUSH_INTERVAL_FRAMES;
  }

  run(x: Float64Array[], low: Float64Array[], frames: number): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      for (let c = 0; c < this.channels; c++) {
        if (this.hasPre) this.withPre(x[c], low[c], 8 * c, start, end);
        else this.plain(x[c], low[c], 8 * c, start, end);
      }
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = FLUSH_INTERVAL_FRAMES;
        flushPairs(this.state);
      }
      start = end;
    }
  }

  private plain(xa: Float64Array, la: Float64Array, o: number, start: number, end: number): void {
    const g = this.gain2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3], r1 = st[o + 4], r2 = st[o + 5];
    for (let i = start; i < end; i++) {
      const x = xa[i];
      const gx = g * x;
      const l1 = gx + p1;
      p1 = gx + gx + p2 - a1 * l1;
      p2 = gx - a2 * l1;
      const l2 = l1 + q1;
      q1 = l1 + l1 + q2 - a1 * l2;
      q2 = l1 - a2 * l2;
      const ap = a2 * x + r1;
      r1 = a1 * x + r2 - a1 * ap;
      r2 = x - a2 * ap;
      la[i] = l2;
      xa[i] = ap - l2;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2; st[o + 4] = r1; st[o + 5] = r2;
  }

  private withPre(xa: Float64Array, la: Float64Array, o: number, start: number, end: number): void {
    const g = this.gain2, a1 = this.a1, a2 = this.a2, e1 = this.pre1, e2 = this.pre2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3], r1 = st[o + 4], r2 = st[o + 5], z1 = st[o + 6], z2 = st[o + 7];
    for (let i = start; i < end; i++) {
      const v = xa[i];
      const x = e2 * v + z1;
      z1 = e1 * (v - x) + z2; // three multiplies: measured faster here than the ordering of the split's own all-pass
      z2 = v - e2 * x;
      const gx = g * x;
      const l1 = gx + p1;
      p1 = gx + gx + p2 - a1 * l1;
      p2 = gx - a2 * l1;
      const l2 = l1 + q1;
      q1 = l1 + l1 + q2 - a1 * l2;
      q2 = l1 - a2 * l2;
      const ap = a2 * x + r1;
      r1 = a1 * x + r2 - a1 * ap;
      r2 = x - a2 * ap;
      la[i] = l2;
      xa[i] = ap - l2;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2; st[o + 4] = r1; st[o + 5] = r2; st[o + 6] = z1; st[o + 7] = z2;
  }
}

/** One step of the splitter's plan: split `band`'s buffer at a crossover, or pass a band through an all-pass. */
type Step =
  | { kind: "split"; split: Lr4Split; /** buffer split in place (becomes high) */ band: number; /** buffer that receives low */ low: number }
  | { kind: "allPass"; filter: PairedBiquad; band: number };

export class BandSplitter {
  readonly bandCount: number;
  /** bands[b][ch]: band b of channel ch, valid in [0, frames) after split(). */
  readonly bands: Float64Array[][];
  readonly latencyFrames = 0;
  private readonly steps: Step[] = [];
  private readonly channels: number;
  private readonly maxBlockFrames: number;

  constructor(sampleRate: number, channels: number, crossoversHz: number[], maxBlockFrames: number) {
    if (crossoversHz.length < 1 || crossoversHz.length > 4) {
      throw new RangeError(`a band splitter takes 1 to 4 crossovers, got ${crossoversHz.length}`);
    }
    for (let i = 0; i < crossoversHz.length; i++) {
      const f = crossoversHz[i];
      if (!(f > 0 && f < sampleRate / 2)) throw new RangeError(`crossover ${f} Hz is outside (0, ${sampleRate / 2}) Hz`);
      if (i > 0 && !(f > crossoversHz[i - 1])) throw new RangeError("crossovers must be strictly ascending");
    }
    this.channels = channels;
    this.maxBlockFrames = maxBlockFrames;
    this.bandCount = crossoversHz.length + 1;
    this.bands = [];
    for (let b = 0; b < this.bandCount; b++) {
      this.bands.push(Array.from({ length: channels }, () => new Float64Array(maxBlockFrames)));
    }
    const coeffs = crossoversHz.map((f) => designLinkwitzRiley4(f, sampleRate));
    // Node over crossovers [lo, hi): its signal is in the buffer of its top
    // band (hi) and still needs the all-passes `pending` (the crossovers of
    // the other side of its parent split). The first one runs in the loop of
    // the node's split; a band that is not split further takes them as
    // passes of their own. (All-passes commute with the rest, so when they
    // run does not matter.)
    const range = (from: number, to: number): number[] => Array.from({ length: Math.max(0, to - from) }, (_, i) => from + i);
    const plan = (lo: number, hi: number, pending: number[]): void => {
      if (lo >= hi) {
        for (const k of pending) this.steps.push({ kind: "allPass", filter: new PairedBiquad(coeffs[k].allPass, channels), band: hi });
        return;
      }
      for (const k of pending.slice(1)) this.steps.push({ kind: "allPass", filter: new PairedBiquad(coeffs[k].allPass, channels), band: hi });
      const m = (lo + hi) >> 1;
      const pre = pending.length > 0 ? coeffs[pending[0]].allPass : null;
      this.steps.push({ kind: "split", split: new Lr4Split(coeffs[m], channels, pre), band: hi, low: m });
      plan(lo, m, range(m + 1, hi));
      plan(m + 1, hi, range(lo, m));
    };
    plan(0, crossoversHz.length, []);
  }

  /** Splits `frames` frames of `input` (not modified) into `bands`. */
  split(input: Float64Array[], frames: number): void {
    if (frames > this.maxBlockFrames) throw new RangeError(`block of ${frames} frames exceeds maxBlockFrames ${this.maxBlockFrames}`);
    const top = this.bands[this.bandCount - 1];
    for (let ch = 0; ch < this.channels; ch++) top[ch].set(input[ch].subarray(0, frames));
    for (const step of this.steps) {
      if (step.kind === "split") step.split.run(this.bands[step.band], this.bands[step.low], frames);
      else step.filter.process(this.bands[step.band], frames);
    }
  }

  reset(): void {
    for (const step of this.steps) (step.kind === "split" ? step.split : step.filter).reset();
  }
}

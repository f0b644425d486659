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
// flat magnitude. Two channels run in one loop (see paired-biquad.ts).

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
 * One LR4 crossover on a pair of channels (or one): low = LP²(x) into
 * `low`, x becomes high = A(x) − low (in place). The Butterworth low-pass is
 * g·(1 + z⁻¹)²/D(z) and the all-pass (a2 + a1 z⁻¹ + z⁻²)/D(z) with the same
 * D(z) = 1 + a1 z⁻¹ + a2 z⁻²; both sections' gain g² is applied to the input
 * once. Transposed direct form II, float64; state per channel: LP, LP, A.
 */
class Lr4Split {
  private readonly gain2: number;
  private readonly a1: number;
  private readonly a2: number;
  private readonly state: Float64Array; // per channel: 3 sections × (s1, s2)
  private untilFlush = FLUSH_INTERVAL_FRAMES;

  constructor(coeffs: LinkwitzRileyCoeffs, private readonly channels: number) {
    const { lowPass: l, allPass: a } = coeffs;
    // The cookbook low-pass and all-pass share a1, a2 exactly (same formulas).
    this.gain2 = l.b0 * l.b0;
    this.a1 = a.a1;
    this.a2 = a.a2;
    this.state = new Float64Array(6 * channels);
  }

  reset(): void {
    this.state.fill(0);
    this.untilFlush = FLUSH_INTERVAL_FRAMES;
  }

  run(x: Float64Array[], low: Float64Array[], frames: number): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      let c = 0;
      for (; c + 1 < this.channels; c += 2) this.pair(x[c], x[c + 1], low[c], low[c + 1], 6 * c, start, end);
      if (c < this.channels) this.one(x[c], low[c], 6 * c, start, end);
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = FLUSH_INTERVAL_FRAMES;
        flushPairs(this.state);
      }
      start = end;
    }
  }

  private pair(xa: Float64Array, xb: Float64Array, la: Float64Array, lb: Float64Array, o: number, start: number, end: number): void {
    const g = this.gain2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3], r1 = st[o + 4], r2 = st[o + 5];
    let u1 = st[o + 6], u2 = st[o + 7], v1 = st[o + 8], v2 = st[o + 9], w1 = st[o + 10], w2 = st[o + 11];
    for (let i = start; i < end; i++) {
      const x = xa[i], y = xb[i];
      const gx = g * x, gy = g * y;
      const lx1 = gx + p1;
      p1 = gx + gx - a1 * lx1 + p2;
      p2 = gx - a2 * lx1;
      const ly1 = gy + u1;
      u1 = gy + gy - a1 * ly1 + u2;
      u2 = gy - a2 * ly1;
      const lx2 = lx1 + q1;
      q1 = lx1 + lx1 - a1 * lx2 + q2;
      q2 = lx1 - a2 * lx2;
      const ly2 = ly1 + v1;
      v1 = ly1 + ly1 - a1 * ly2 + v2;
      v2 = ly1 - a2 * ly2;
      const ax = a2 * x + r1;
      r1 = a1 * (x - ax) + r2;
      r2 = x - a2 * ax;
      const ay = a2 * y + w1;
      w1 = a1 * (y - ay) + w2;
      w2 = y - a2 * ay;
      la[i] = lx2;
      lb[i] = ly2;
      xa[i] = ax - lx2;
      xb[i] = ay - ly2;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2; st[o + 4] = r1; st[o + 5] = r2;
    st[o + 6] = u1; st[o + 7] = u2; st[o + 8] = v1; st[o + 9] = v2; st[o + 10] = w1; st[o + 11] = w2;
  }

  private one(xa: Float64Array, la: Float64Array, o: number, start: number, end: number): void {
    const g = this.gain2, a1 = this.a1, a2 = this.a2;
    const st = this.state;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3], r1 = st[o + 4], r2 = st[o + 5];
    for (let i = start; i < end; i++) {
      const x = xa[i];
      const gx = g * x;
      const lx1 = gx + p1;
      p1 = gx + gx - a1 * lx1 + p2;
      p2 = gx - a2 * lx1;
      const lx2 = lx1 + q1;
      q1 = lx1 + lx1 - a1 * lx2 + q2;
      q2 = lx1 - a2 * lx2;
      const ax = a2 * x + r1;
      r1 = a1 * (x - ax) + r2;
      r2 = x - a2 * ax;
      la[i] = lx2;
      xa[i] = ax - lx2;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2; st[o + 4] = r1; st[o + 5] = r2;
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
    // Node over crossovers [lo, hi): its signal is in the buffer of its top band (hi).
    const plan = (lo: number, hi: number): void => {
      if (lo >= hi) return;
      const m = (lo + hi) >> 1;
      this.steps.push({ kind: "split", split: new Lr4Split(coeffs[m], channels), band: hi, low: m });
      for (let k = m + 1; k < hi; k++) this.steps.push({ kind: "allPass", filter: new PairedBiquad(coeffs[k].allPass, channels), band: m });
      for (let k = lo; k < m; k++) this.steps.push({ kind: "allPass", filter: new PairedBiquad(coeffs[k].allPass, channels), band: hi });
      plan(lo, m);
      plan(m + 1, hi);
    };
    plan(0, crossoversHz.length);
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

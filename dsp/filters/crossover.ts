// Linkwitz-Riley 4th-order crossovers and a band splitter for 1–4 crossover
// points (2–5 bands).
//
// LR4 = two cascaded 2nd-order Butterworth sections (Q = 1/√2). Low + high of
// one LR4 crossover is the 2nd-order all-pass at the same frequency with
// Q = 1/√2 (analogue: (1+s⁴)/B(s)² = (s²−√2s+1)/(s²+√2s+1); the bilinear
// transform keeps the identity). The tree splits at the lowest crossover, then
// splits the upper part again; each lower band passes through the all-passes
// of the later crossovers, so every band carries the same phase and the sum of
// the bands is the product of all the crossovers' all-passes: flat magnitude.

import { Biquad } from "./biquad.ts";
import { BUTTERWORTH_Q, type BiquadCoeffs, designBiquad } from "./biquad-design.ts";

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

interface Stage {
  split: Lr4Split;
  allPass: Biquad[]; // one per lower band, acting on bands[0..k)
}

// State below this is flushed (as in Biquad) so silence never turns subnormal.
const FLUSH_BELOW = 1e-30;

/**
 * One LR4 crossover: low = LP², high = HP², both computed in one pass over the
 * input (four TDF-II sections per sample), per-channel state.
 */
class Lr4Split {
  private readonly c: Float64Array; // LP b0 b1 b2 a1 a2, HP b0 b1 b2 a1 a2
  private readonly state: Float64Array; // per channel: 4 sections × 2

  constructor(coeffs: LinkwitzRileyCoeffs, channels: number) {
    const { lowPass: l, highPass: h } = coeffs;
    this.c = Float64Array.from([l.b0, l.b1, l.b2, l.a1, l.a2, h.b0, h.b1, h.b2, h.a1, h.a2]);
    this.state = new Float64Array(8 * channels);
  }

  reset(): void {
    this.state.fill(0);
  }

  /** low[i] = LR4 low of x[i]; x becomes the LR4 high (in place). */
  run(x: Float64Array, low: Float64Array, ch: number, frames: number): void {
    const c = this.c;
    const lb0 = c[0], lb1 = c[1], lb2 = c[2], la1 = c[3], la2 = c[4];
    const hb0 = c[5], hb1 = c[6], hb2 = c[7], ha1 = c[8], ha2 = c[9];
    const st = this.state;
    const o = 8 * ch;
    let p1 = st[o], p2 = st[o + 1], q1 = st[o + 2], q2 = st[o + 3];
    let r1 = st[o + 4], r2 = st[o + 5], t1 = st[o + 6], t2 = st[o + 7];
    for (let i = 0; i < frames; i++) {
      const v = x[i];
      const l1 = lb0 * v + p1;
      p1 = lb1 * v - la1 * l1 + p2;
      p2 = lb2 * v - la2 * l1;
      const l2 = lb0 * l1 + q1;
      q1 = lb1 * l1 - la1 * l2 + q2;
      q2 = lb2 * l1 - la2 * l2;
      const h1 = hb0 * v + r1;
      r1 = hb1 * v - ha1 * h1 + r2;
      r2 = hb2 * v - ha2 * h1;
      const h2 = hb0 * h1 + t1;
      t1 = hb1 * h1 - ha1 * h2 + t2;
      t2 = hb2 * h1 - ha2 * h2;
      if (Math.abs(p1) + Math.abs(p2) + Math.abs(q1) + Math.abs(q2) < FLUSH_BELOW) {
        p1 *= 0; p2 *= 0; q1 *= 0; q2 *= 0;
      }
      if (Math.abs(r1) + Math.abs(r2) + Math.abs(t1) + Math.abs(t2) < FLUSH_BELOW) {
        r1 *= 0; r2 *= 0; t1 *= 0; t2 *= 0;
      }
      low[i] = l2;
      x[i] = h2;
    }
    st[o] = p1; st[o + 1] = p2; st[o + 2] = q1; st[o + 3] = q2;
    st[o + 4] = r1; st[o + 5] = r2; st[o + 6] = t1; st[o + 7] = t2;
  }
}

export class BandSplitter {
  readonly bandCount: number;
  /** bands[b][ch]: band b of channel ch, valid in [0, frames) after split(). */
  readonly bands: Float64Array[][];
  readonly latencyFrames = 0;
  private readonly stages: Stage[];
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
    this.stages = crossoversHz.map((f, k) => {
      const c = designLinkwitzRiley4(f, sampleRate);
      return {
        split: new Lr4Split(c, channels),
        allPass: Array.from({ length: k }, () => new Biquad(c.allPass, channels)),
      };
    });
  }

  /** Splits `frames` frames of `input` (not modified) into `bands`. */
  split(input: Float64Array[], frames: number): void {
    if (frames > this.maxBlockFrames) throw new RangeError(`block of ${frames} frames exceeds maxBlockFrames ${this.maxBlockFrames}`);
    const top = this.bandCount - 1;
    for (let ch = 0; ch < this.channels; ch++) {
      // The top band buffer holds "everything above the crossovers so far".
      const rest = this.bands[top][ch];
      rest.set(input[ch].subarray(0, frames));
      for (let k = 0; k < this.stages.length; k++) {
        const stage = this.stages[k];
        stage.split.run(rest, this.bands[k][ch], ch, frames);
        for (let b = 0; b < k; b++) stage.allPass[b].processChannel(this.bands[b][ch], ch, frames);
      }
    }
  }

  reset(): void {
    for (const s of this.stages) {
      s.split.reset();
      for (const f of s.allPass) f.reset();
    }
  }
}

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
  low: [Biquad, Biquad];
  high: [Biquad, Biquad];
  allPass: Biquad[]; // one per lower band, acting on bands[0..k)
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
        low: [new Biquad(c.lowPass, channels), new Biquad(c.lowPass, channels)],
        high: [new Biquad(c.highPass, channels), new Biquad(c.highPass, channels)],
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
        const low = this.bands[k][ch];
        low.set(rest.subarray(0, frames));
        stage.low[0].processChannel(low, ch, frames);
        stage.low[1].processChannel(low, ch, frames);
        stage.high[0].processChannel(rest, ch, frames);
        stage.high[1].processChannel(rest, ch, frames);
        for (let b = 0; b < k; b++) stage.allPass[b].processChannel(this.bands[b][ch], ch, frames);
      }
    }
  }

  reset(): void {
    for (const s of this.stages) {
      for (const f of [...s.low, ...s.high, ...s.allPass]) f.reset();
    }
  }
}

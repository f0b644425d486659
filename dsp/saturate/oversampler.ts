// 2× / 4× oversampling with cascaded polyphase half-band FIRs.
//   stage 1 (base ↔ 2×): 79 taps, Kaiser β for 100 dB; transition 0.2083–0.2917
//     of the 2× rate (20–28 kHz at 48 kHz in), design stopband ≈ −100 dB.
//   stage 2 (2× ↔ 4×): 35 taps, same β; transition 0.125–0.375 of the 4× rate
//     (24–72 kHz at 48 kHz in); its images land where stage 1 removes them.
// Latency: a round trip through one stage delays its input rate by its
// centre index c = (taps−1)/2 samples. Stage 1: c1 = 39 base frames.
// Stage 2: c2 = 17 samples at 2×, padded by one 2× sample to 18 = 9 base
// frames so the total stays whole. 2×: 39 frames; 4×: 48 frames.

import { designHalfBand } from "./half-band.ts";

export const STAGE1_TAPS = 79;
export const STAGE2_TAPS = 35;
export const HALF_BAND_STOPBAND_DB = 100;

/** One channel's 2× up/down pair around one half-band filter. */
class HalfBandPair {
  private readonly sideTaps: Float64Array; // the non-zero off-centre taps, ×2 for up
  private readonly half: number; // number of non-zero side taps
  private readonly upHist: Float64Array;
  private readonly downEven: Float64Array;
  private readonly downOdd: Float64Array;
  private readonly centreDelay: number;

  constructor(taps: number, maxInFrames: number, private readonly pad: 0 | 1) {
    const h = designHalfBand(taps, HALF_BAND_STOPBAND_DB);
    const c = (taps - 1) / 2;
    // Non-zero side taps sit at even indices n = 0, 2, …, taps−1 (c odd).
    this.half = (taps + 1) / 2;
    this.sideTaps = new Float64Array(this.half);
    for (let j = 0; j < this.half; j++) this.sideTaps[j] = h[2 * j];
    this.centreDelay = (c - 1) / 2;
    if (this.half % 2 !== 0) throw new RangeError("the side-tap count must be even for the folded loop");
    const len = this.half - 1;
    this.upHist = new Float64Array(len + maxInFrames + 1);
    this.downEven = new Float64Array(len + maxInFrames + 1);
    this.downOdd = new Float64Array(len + maxInFrames + 2);
  }

  reset(): void {
    this.upHist.fill(0);
    this.downEven.fill(0);
    this.downOdd.fill(0);
  }

  /** x (n samples) → y (2n samples at the doubled rate). */
  up(x: Float64Array, n: number, y: Float64Array): void {
    // The optional pad delays the input by one sample (see the header).
    const histLen = this.half - 1 + this.pad;
    const hist = this.upHist;
    hist.set(x.subarray(0, n), histLen);
    const taps = this.sideTaps, half = this.half, d = this.centreDelay, fold = half >> 1;
    for (let i = 0; i < n; i++) {
      const cur = histLen + i - this.pad;
      // Linear phase: tap j equals tap half−1−j, so add the pair first.
      let acc = 0;
      const far = cur - half + 1;
      for (let j = 0; j < fold; j++) acc += taps[j] * (hist[cur - j] + hist[far + j]);
      y[2 * i] = 2 * acc;
      y[2 * i + 1] = hist[cur - d];
    }
    hist.copyWithin(0, n, n + histLen);
  }

  /** u (2n samples) → x (n samples): y[i] = Σ h[2j]·u[2(i−j)] + ½·u[2i − c]. */
  down(u: Float64Array, n: number, x: Float64Array): void {
    const len = this.half - 1;
    const ev = this.downEven, od = this.downOdd;
    for (let i = 0; i < n; i++) {
      ev[len + i] = u[2 * i];
      od[len + i] = u[2 * i + 1];
    }
    const taps = this.sideTaps, half = this.half, oddDelay = this.centreDelay + 1, fold = half >> 1;
    for (let i = 0; i < n; i++) {
      const cur = len + i;
      let acc = 0;
      const far = cur - half + 1;
      for (let j = 0; j < fold; j++) acc += taps[j] * (ev[cur - j] + ev[far + j]);
      x[i] = acc + 0.5 * od[cur - oddDelay];
    }
    ev.copyWithin(0, n, n + len);
    od.copyWithin(0, n, n + len);
  }
}

export class Oversampler {
  readonly latencyFrames: number;
  private readonly stage1: HalfBandPair[];
  private readonly stage2: HalfBandPair[];
  private readonly mid: Float64Array;
  /** The oversampled buffer of the last `up` call (factor·frames samples). */
  readonly high: Float64Array;

  constructor(readonly factor: 2 | 4, channels: number, maxBlockFrames: number) {
    this.stage1 = Array.from({ length: channels }, () => new HalfBandPair(STAGE1_TAPS, maxBlockFrames, 0));
    this.stage2 = factor === 4 ? Array.from({ length: channels }, () => new HalfBandPair(STAGE2_TAPS, 2 * maxBlockFrames, 1)) : [];
    this.mid = new Float64Array(2 * maxBlockFrames);
    this.high = new Float64Array(factor * maxBlockFrames);
    const c1 = (STAGE1_TAPS - 1) / 2;
    const c2 = (STAGE2_TAPS - 1) / 2;
    this.latencyFrames = factor === 2 ? c1 : c1 + (c2 + 1) / 2;
  }

  reset(): void {
    for (const s of this.stage1) s.reset();
    for (const s of this.stage2) s.reset();
  }

  /** Channel `ch`'s n frames → this.high (factor·n samples). */
  up(ch: number, x: Float64Array, n: number): Float64Array {
    if (this.factor === 2) {
      this.stage1[ch].up(x, n, this.high);
    } else {
      this.stage1[ch].up(x, n, this.mid);
      this.stage2[ch].up(this.mid, 2 * n, this.high);
    }
    return this.high;
  }

  /** this.high (factor·n samples) → channel `ch`'s n frames in x. */
  down(ch: number, x: Float64Array, n: number): void {
    if (this.factor === 2) {
      this.stage1[ch].down(this.high, n, x);
    } else {
      this.stage2[ch].down(this.high, 2 * n, this.mid);
      this.stage1[ch].down(this.mid, n, x);
    }
  }
}

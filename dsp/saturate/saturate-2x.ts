// The 2× saturator in one pass (the common setting): stage-1 half-band up,
// the curve, half-band down and the dry/wet mix, per channel in one loop.
// Same filters and curve as Oversampler(2) → softClip → Oversampler(2) with
// the dry path delayed by the latency (a test holds the two together); what
// it saves is the 2× buffers, the separate passes over them and the dry
// delay line, because:
//   - the odd 2× samples are the input delayed by (c − 1)/2 = 19 frames, and
//     the down filter's centre tap delays them by 20 more: the odd branch of
//     the output is ½·curve(x[i − 39]);
//   - the dry path needs x[i − 39] too, which the input history holds.
// Per frame: 2 × 20 folded multiply-adds (the side taps are symmetric) and
// two curve values.
//
// The loop body is written out: a loop over the taps, or a helper too large
// for V8 to inline, runs several times slower (checks on every array access,
// a boxed result). Two frames per iteration: their sums read 41 input values
// instead of 2 × 40, and array reads, not multiplies, are what V8's code
// spends its time on here. The sums are four chains of five taps added as a
// tree, so each waits on about 8 additions instead of 20.

import { designHalfBand } from "./half-band.ts";
import { HALF_BAND_STOPBAND_DB, STAGE1_TAPS } from "./oversampler.ts";
import { softClip } from "./soft-clip.ts";

const SPAN = (STAGE1_TAPS - 1) / 2; // 39: history frames, and the latency
const FOLD = (STAGE1_TAPS + 1) / 4; // 20 distinct side taps; the kernel below is written for them

export class Saturate2x {
  readonly latencyFrames = SPAN;
  private readonly taps: Float64Array;
  // Per channel, SPAN past frames then the block (+1: an odd block's last
  // iteration reads, and discards, one frame past its end).
  private readonly inHist: Float64Array[];
  private readonly evenHist: Float64Array[]; // the curve of the even 2× samples, same layout

  constructor(channels: number, maxBlockFrames: number) {
    if (FOLD !== 20) throw new Error("the 2× kernel is written for 79 taps");
    const h = designHalfBand(STAGE1_TAPS, HALF_BAND_STOPBAND_DB);
    // Non-zero side taps at even indices 0, 2, …; the first FOLD of them, the rest mirror.
    this.taps = new Float64Array(FOLD);
    for (let j = 0; j < FOLD; j++) this.taps[j] = h[2 * j];
    this.inHist = Array.from({ length: channels }, () => new Float64Array(SPAN + maxBlockFrames + 1));
    this.evenHist = Array.from({ length: channels }, () => new Float64Array(SPAN + maxBlockFrames + 1));
  }

  reset(): void {
    for (const b of this.inHist) b.fill(0);
    for (const b of this.evenHist) b.fill(0);
  }

  /** In place: x = dryGain·x[i − 39] + wetGain·down(curve(drive·up(x))). */
  process(channels: Float64Array[], frames: number, drive: number, dryGain: number, wetGain: number): void {
    for (let c = 0; c < this.inHist.length; c++) {
      const x = this.inHist[c], e = this.evenHist[c];
      x.set(channels[c].subarray(0, frames), SPAN);
      x[SPAN + frames] = 0;
      kernel(this.taps, x, e, channels[c], frames, drive, dryGain, wetGain);
      x.copyWithin(0, frames, frames + SPAN);
      e.copyWithin(0, frames, frames + SPAN);
    }
  }
}

function kernel(taps: Float64Array, x: Float64Array, e: Float64Array, out: Float64Array, frames: number, drive: number, dryGain: number, wetGain: number): void {
  const t0 = taps[0], t1 = taps[1], t2 = taps[2], t3 = taps[3], t4 = taps[4], t5 = taps[5], t6 = taps[6];
  const t7 = taps[7], t8 = taps[8], t9 = taps[9], t10 = taps[10], t11 = taps[11], t12 = taps[12], t13 = taps[13];
  const t14 = taps[14], t15 = taps[15], t16 = taps[16], t17 = taps[17], t18 = taps[18], t19 = taps[19];
  // A bound V8 can see (blocks are far shorter) spares an overflow check per index.
  const n = frames & 0xfffff;
  for (let i = 0; i < n; i += 2) {
    // Frames i and i + 1: x[i + 39] is this block's frame i, x[i] the frame 39 before it.
    const up0 =
      t0 * (x[i + 39] + x[i]) + t1 * (x[i + 38] + x[i + 1]) + t2 * (x[i + 37] + x[i + 2]) + t3 * (x[i + 36] + x[i + 3]) + t4 * (x[i + 35] + x[i + 4]) +
      (t5 * (x[i + 34] + x[i + 5]) + t6 * (x[i + 33] + x[i + 6]) + t7 * (x[i + 32] + x[i + 7]) + t8 * (x[i + 31] + x[i + 8]) + t9 * (x[i + 30] + x[i + 9])) +
      (t10 * (x[i + 29] + x[i + 10]) + t11 * (x[i + 28] + x[i + 11]) + t12 * (x[i + 27] + x[i + 12]) + t13 * (x[i + 26] + x[i + 13]) + t14 * (x[i + 25] + x[i + 14]) +
        (t15 * (x[i + 24] + x[i + 15]) + t16 * (x[i + 23] + x[i + 16]) + t17 * (x[i + 22] + x[i + 17]) + t18 * (x[i + 21] + x[i + 18]) + t19 * (x[i + 20] + x[i + 19])));
    const up1 =
      t0 * (x[i + 40] + x[i + 1]) + t1 * (x[i + 39] + x[i + 2]) + t2 * (x[i + 38] + x[i + 3]) + t3 * (x[i + 37] + x[i + 4]) + t4 * (x[i + 36] + x[i + 5]) +
      (t5 * (x[i + 35] + x[i + 6]) + t6 * (x[i + 34] + x[i + 7]) + t7 * (x[i + 33] + x[i + 8]) + t8 * (x[i + 32] + x[i + 9]) + t9 * (x[i + 31] + x[i + 10])) +
      (t10 * (x[i + 30] + x[i + 11]) + t11 * (x[i + 29] + x[i + 12]) + t12 * (x[i + 28] + x[i + 13]) + t13 * (x[i + 27] + x[i + 14]) + t14 * (x[i + 26] + x[i + 15]) +
        (t15 * (x[i + 25] + x[i + 16]) + t16 * (x[i + 24] + x[i + 17]) + t17 * (x[i + 23] + x[i + 18]) + t18 * (x[i + 22] + x[i + 19]) + t19 * (x[i + 21] + x[i + 20])));
    const e0 = softClip(drive * (2 * up0)), e1 = softClip(drive * (2 * up1));
    const down0 =
      t0 * (e0 + e[i]) + t1 * (e[i + 38] + e[i + 1]) + t2 * (e[i + 37] + e[i + 2]) + t3 * (e[i + 36] + e[i + 3]) + t4 * (e[i + 35] + e[i + 4]) +
      (t5 * (e[i + 34] + e[i + 5]) + t6 * (e[i + 33] + e[i + 6]) + t7 * (e[i + 32] + e[i + 7]) + t8 * (e[i + 31] + e[i + 8]) + t9 * (e[i + 30] + e[i + 9])) +
      (t10 * (e[i + 29] + e[i + 10]) + t11 * (e[i + 28] + e[i + 11]) + t12 * (e[i + 27] + e[i + 12]) + t13 * (e[i + 26] + e[i + 13]) + t14 * (e[i + 25] + e[i + 14]) +
        (t15 * (e[i + 24] + e[i + 15]) + t16 * (e[i + 23] + e[i + 16]) + t17 * (e[i + 22] + e[i + 17]) + t18 * (e[i + 21] + e[i + 18]) + t19 * (e[i + 20] + e[i + 19])));
    const down1 =
      t0 * (e1 + e[i + 1]) + t1 * (e0 + e[i + 2]) + t2 * (e[i + 38] + e[i + 3]) + t3 * (e[i + 37] + e[i + 4]) + t4 * (e[i + 36] + e[i + 5]) +
      (t5 * (e[i + 35] + e[i + 6]) + t6 * (e[i + 34] + e[i + 7]) + t7 * (e[i + 33] + e[i + 8]) + t8 * (e[i + 32] + e[i + 9]) + t9 * (e[i + 31] + e[i + 10])) +
      (t10 * (e[i + 30] + e[i + 11]) + t11 * (e[i + 29] + e[i + 12]) + t12 * (e[i + 28] + e[i + 13]) + t13 * (e[i + 27] + e[i + 14]) + t14 * (e[i + 26] + e[i + 15]) +
        (t15 * (e[i + 25] + e[i + 16]) + t16 * (e[i + 24] + e[i + 17]) + t17 * (e[i + 23] + e[i + 18]) + t18 * (e[i + 22] + e[i + 19]) + t19 * (e[i + 21] + e[i + 20])));

    e[i + 39] = e0;
    const dry0 = x[i];
    out[i] = dryGain * dry0 + wetGain * (down0 + 0.5 * softClip(drive * dry0));
    if (i + 1 < n) {
      e[i + 40] = e1;
      const dry1 = x[i + 1];
      out[i + 1] = dryGain * dry1 + wetGain * (down1 + 0.5 * softClip(drive * dry1));
    }
  }
}

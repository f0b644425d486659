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
// a boxed result). Two frames per iteration, their 41 input values (and 39
// curve values) read once into locals and shared by both sums: array reads,
// each with its bounds check, not multiplies, are what V8's code spends its
// time on here, and V8 does not merge repeated reads of a typed array by
// itself. The sums are four chains of five taps added as a tree, so each
// waits on about 8 additions instead of 20.

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
    const x0 = x[i], x1 = x[i + 1], x2 = x[i + 2], x3 = x[i + 3], x4 = x[i + 4], x5 = x[i + 5], x6 = x[i + 6], x7 = x[i + 7], x8 = x[i + 8], x9 = x[i + 9];
    const x10 = x[i + 10], x11 = x[i + 11], x12 = x[i + 12], x13 = x[i + 13], x14 = x[i + 14], x15 = x[i + 15], x16 = x[i + 16], x17 = x[i + 17], x18 = x[i + 18], x19 = x[i + 19];
    const x20 = x[i + 20], x21 = x[i + 21], x22 = x[i + 22], x23 = x[i + 23], x24 = x[i + 24], x25 = x[i + 25], x26 = x[i + 26], x27 = x[i + 27], x28 = x[i + 28], x29 = x[i + 29];
    const x30 = x[i + 30], x31 = x[i + 31], x32 = x[i + 32], x33 = x[i + 33], x34 = x[i + 34], x35 = x[i + 35], x36 = x[i + 36], x37 = x[i + 37], x38 = x[i + 38], x39 = x[i + 39];
    const x40 = x[i + 40];
    const up0 =
      t0 * (x39 + x0) + t1 * (x38 + x1) + t2 * (x37 + x2) + t3 * (x36 + x3) + t4 * (x35 + x4) +
      (t5 * (x34 + x5) + t6 * (x33 + x6) + t7 * (x32 + x7) + t8 * (x31 + x8) + t9 * (x30 + x9)) +
      (t10 * (x29 + x10) + t11 * (x28 + x11) + t12 * (x27 + x12) + t13 * (x26 + x13) + t14 * (x25 + x14) +
        (t15 * (x24 + x15) + t16 * (x23 + x16) + t17 * (x22 + x17) + t18 * (x21 + x18) + t19 * (x20 + x19)));
    const up1 =
      t0 * (x40 + x1) + t1 * (x39 + x2) + t2 * (x38 + x3) + t3 * (x37 + x4) + t4 * (x36 + x5) +
      (t5 * (x35 + x6) + t6 * (x34 + x7) + t7 * (x33 + x8) + t8 * (x32 + x9) + t9 * (x31 + x10)) +
      (t10 * (x30 + x11) + t11 * (x29 + x12) + t12 * (x28 + x13) + t13 * (x27 + x14) + t14 * (x26 + x15) +
        (t15 * (x25 + x16) + t16 * (x24 + x17) + t17 * (x23 + x18) + t18 * (x22 + x19) + t19 * (x21 + x20)));
    const e0 = softClip(drive * (2 * up0)), e1 = softClip(drive * (2 * up1));
    const u0 = e[i], u1 = e[i + 1], u2 = e[i + 2], u3 = e[i + 3], u4 = e[i + 4], u5 = e[i + 5], u6 = e[i + 6], u7 = e[i + 7], u8 = e[i + 8], u9 = e[i + 9];
    const u10 = e[i + 10], u11 = e[i + 11], u12 = e[i + 12], u13 = e[i + 13], u14 = e[i + 14], u15 = e[i + 15], u16 = e[i + 16], u17 = e[i + 17], u18 = e[i + 18], u19 = e[i + 19];
    const u20 = e[i + 20], u21 = e[i + 21], u22 = e[i + 22], u23 = e[i + 23], u24 = e[i + 24], u25 = e[i + 25], u26 = e[i + 26], u27 = e[i + 27], u28 = e[i + 28], u29 = e[i + 29];
    const u30 = e[i + 30], u31 = e[i + 31], u32 = e[i + 32], u33 = e[i + 33], u34 = e[i + 34], u35 = e[i + 35], u36 = e[i + 36], u37 = e[i + 37], u38 = e[i + 38];
    const down0 =
      t0 * (e0 + u0) + t1 * (u38 + u1) + t2 * (u37 + u2) + t3 * (u36 + u3) + t4 * (u35 + u4) +
      (t5 * (u34 + u5) + t6 * (u33 + u6) + t7 * (u32 + u7) + t8 * (u31 + u8) + t9 * (u30 + u9)) +
      (t10 * (u29 + u10) + t11 * (u28 + u11) + t12 * (u27 + u12) + t13 * (u26 + u13) + t14 * (u25 + u14) +
        (t15 * (u24 + u15) + t16 * (u23 + u16) + t17 * (u22 + u17) + t18 * (u21 + u18) + t19 * (u20 + u19)));
    const down1 =
      t0 * (e1 + u1) + t1 * (e0 + u2) + t2 * (u38 + u3) + t3 * (u37 + u4) + t4 * (u36 + u5) +
      (t5 * (u35 + u6) + t6 * (u34 + u7) + t7 * (u33 + u8) + t8 * (u32 + u9) + t9 * (u31 + u10)) +
      (t10 * (u30 + u11) + t11 * (u29 + u12) + t12 * (u28 + u13) + t13 * (u27 + u14) + t14 * (u26 + u15) +
        (t15 * (u25 + u16) + t16 * (u24 + u17) + t17 * (u23 + u18) + t18 * (u22 + u19) + t19 * (u21 + u20)));

    e[i + 39] = e0;
    const dry0 = x0;
    out[i] = dryGain * dry0 + wetGain * (down0 + 0.5 * softClip(drive * dry0));
    if (i + 1 < n) {
      e[i + 40] = e1;
      const dry1 = x1;
      out[i + 1] = dryGain * dry1 + wetGain * (down1 + 0.5 * softClip(drive * dry1));
    }
  }
}

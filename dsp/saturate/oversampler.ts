// 2× / 4× oversampling with cascaded half-band all-pass pairs (half-band.ts).
//   stage 1 (base ↔ 2×): 7 coefficients (order 15), transition 1/12 wide
//     around a quarter of the 2× rate: flat to 0.2083 of it (20 kHz at
//     48 kHz in), stopband from 0.2917 (28 kHz), −112 dB.
//   stage 2 (2× ↔ 4×): 4 coefficients (order 9), transition 0.125–0.375 of
//     the 4× rate (24–72 kHz at 48 kHz in; its images land where stage 1
//     removes them), −116 dB.
// Up by 2: the even high-rate samples are A0(x), the odd ones A1(x) (the
// zero-stuffed input through 2·H). Down by 2: y[n] = ½·(A0(w_even)[n] +
// A1(w_odd)[n − 1]). A round trip is then ½·(A0² + z⁻¹·A1²): flat in the
// passband (to about 1e-9 dB), not linear-phase. Its latency is reported as
// the position of the round trip's impulse-response peak (roundTripLatency),
// a few frames, so a transient comes out where it went in.
// Filter state below FLUSH_BELOW is zeroed every FLUSH_INTERVAL_FRAMES input
// frames from the stream start (silence must not decay into subnormals; the
// block size never changes the output).

import { FLUSH_BELOW, FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { designHalfBand, type HalfBandAllPass } from "./half-band.ts";

export const STAGE1_COEFFS = 7;
export const STAGE1_TRANSITION = 1 / 12;
export const STAGE2_COEFFS = 4;
export const STAGE2_TRANSITION = 0.25;

let stage1: HalfBandAllPass | null = null;
let stage2: HalfBandAllPass | null = null;
export function stage1Filter(): HalfBandAllPass {
  return (stage1 ??= designHalfBand(STAGE1_COEFFS, STAGE1_TRANSITION));
}
export function stage2Filter(): HalfBandAllPass {
  return (stage2 ??= designHalfBand(STAGE2_COEFFS, STAGE2_TRANSITION));
}

/** Sets every value below FLUSH_BELOW in magnitude to 0. */
export function flushSmall(state: Float64Array): void {
  for (let i = 0; i < state.length; i++) if (Math.abs(state[i]) < FLUSH_BELOW) state[i] = 0;
}

/** One channel's 2× up/down pair around one half-band filter. */
class HalfBandPair {
  private readonly a0: Float64Array;
  private readonly a1: Float64Array;
  // Up: [0] previous input, then each section's previous output (branch 0, then branch 1).
  private readonly upState: Float64Array;
  // Down: [0] previous even input, [1] previous odd input, [2] the odd branch's
  // last output (the z⁻¹), then the sections' previous outputs.
  private readonly downState: Float64Array;
  private upUntilFlush = FLUSH_INTERVAL_FRAMES;
  private downUntilFlush = FLUSH_INTERVAL_FRAMES;

  constructor(filter: HalfBandAllPass) {
    this.a0 = filter.branch0;
    this.a1 = filter.branch1;
    this.upState = new Float64Array(1 + this.a0.length + this.a1.length);
    this.downState = new Float64Array(3 + this.a0.length + this.a1.length);
  }

  reset(): void {
    this.upState.fill(0);
    this.downState.fill(0);
    this.upUntilFlush = FLUSH_INTERVAL_FRAMES;
    this.downUntilFlush = FLUSH_INTERVAL_FRAMES;
  }

  /** x (n samples) → y (2n samples at the doubled rate). */
  up(x: Float64Array, n: number, y: Float64Array): void {
    const a0 = this.a0, a1 = this.a1, s = this.upState;
    for (let i = 0; i < n; i++) {
      const input = x[i], prev = s[0];
      y[2 * i] = cascade(a0, s, 1, input, prev);
      y[2 * i + 1] = cascade(a1, s, 1 + a0.length, input, prev);
      s[0] = input;
      if (--this.upUntilFlush === 0) {
        this.upUntilFlush = FLUSH_INTERVAL_FRAMES;
        flushSmall(s);
      }
    }
  }

  /** u (2n samples) → x (n samples). */
  down(u: Float64Array, n: number, x: Float64Array): void {
    const a0 = this.a0, a1 = this.a1, s = this.downState;
    for (let i = 0; i < n; i++) {
      const even = u[2 * i], odd = u[2 * i + 1];
      const b0 = cascade(a0, s, 3, even, s[0]);
      const b1 = cascade(a1, s, 3 + a0.length, odd, s[1]);
      x[i] = 0.5 * (b0 + s[2]);
      s[2] = b1;
      s[0] = even;
      s[1] = odd;
      if (--this.downUntilFlush === 0) {
        this.downUntilFlush = FLUSH_INTERVAL_FRAMES;
        flushSmall(s);
      }
    }
  }
}

/**
 * One sample through a cascade of first-order all-passes
 * y = a·(v − y₋₁) + v₋₁: `input` and its predecessor `prev` enter the first
 * section; state[o + k] holds section k's previous output (the next
 * section's previous input). Returns the last section's output.
 */
function cascade(coefs: Float64Array, state: Float64Array, o: number, input: number, prev: number): number {
  let v = input, vp = prev;
  for (let k = 0; k < coefs.length; k++) {
    const old = state[o + k];
    const out = coefs[k] * (v - old) + vp;
    vp = old;
    state[o + k] = out;
    v = out;
  }
  return v;
}

const latencyCache = new Map<number, number>();

/** Frames from an impulse in to the peak of its round trip (up, down) at this factor. */
export function roundTripLatency(factor: 2 | 4): number {
  let l = latencyCache.get(factor);
  if (l === undefined) {
    const n = 256;
    const os = new Oversampler(factor, 1, n, 0);
    const x = new Float64Array(n);
    x[0] = 1;
    os.up(0, x, n);
    os.down(0, x, n);
    l = 0;
    for (let i = 1; i < n; i++) if (Math.abs(x[i]) > Math.abs(x[l])) l = i;
    latencyCache.set(factor, l);
  }
  return l;
}

export class Oversampler {
  readonly latencyFrames: number;
  private readonly stage1: HalfBandPair[];
  private readonly stage2: HalfBandPair[];
  private readonly mid: Float64Array;
  /** The oversampled buffer of the last `up` call (factor·frames samples). */
  readonly high: Float64Array;

  constructor(readonly factor: 2 | 4, channels: number, maxBlockFrames: number, latencyFrames = roundTripLatency(factor)) {
    this.stage1 = Array.from({ length: channels }, () => new HalfBandPair(stage1Filter()));
    this.stage2 = factor === 4 ? Array.from({ length: channels }, () => new HalfBandPair(stage2Filter())) : [];
    this.mid = new Float64Array(2 * maxBlockFrames);
    this.high = new Float64Array(factor * maxBlockFrames);
    this.latencyFrames = latencyFrames;
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

// The tape stage's oversampled non-linear part and its base-rate filters in
// one pass per channel, on the saturator's half-band pairs (the same
// stage1Filter / stage2Filter designs, arithmetic order and flush positions
// as Oversampler → curve → down; a test holds the two to the bit).
// At the high rate each sample v goes through
//   u = drive·v
//   e = u + k·(u − u₋₁)                 record pre-emphasis (one zero)
//   s = tapeCurve(e)                    the magnetic curve
//   w = (s + k·w₋₁) / (1 + k)           the exact inverse de-emphasis (one pole)
//   y = dryGain·v + wetGain·w
// so at small signal w = u and the non-linear part is a plain gain; loud
// treble meets the curve harder than bass (rate-dependent saturation).
// Down at the base rate: the head bump (a cookbook peaking biquad, TDF-II)
// and the spacing loss (a first-order bilinear low-pass), each optional.

import { FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { flushSmall, roundTripLatency, stage1Filter, stage2Filter } from "../saturate/oversampler.ts";

/**
 * The curve: a rational sigmoid, x·(27 + x²)/(27 + 9x²) for |x| ≤ 3 and ±1
 * beyond. It meets ±1 at ±3 with zero slope (so it is smooth there), has
 * slope 1 at 0 and follows tanh within 0.025 (a [3/2] rational approximant
 * of tanh; from memory), with one division and no table: cheaper than the
 * saturator's [7/6] approximant, and this stage runs it four times a frame.
 */
export function tapeCurve(x: number): number {
  const v = x > 3 ? 3 : x < -3 ? -3 : x;
  const v2 = v * v;
  return (v * (27 + v2)) / (27 + 9 * v2);
}

/** Per-block constants: the curve and mix, then the base-rate filters. */
export interface TapeKernelParams {
  drive: number;
  emphasisK: number;
  dryGain: number;
  wetGain: number;
  /** Bump biquad b0, b1, b2, a1, a2 (identity when there is no bump). */
  bump: Float64Array;
  /** Low-pass b0, b1, a1 (first order; identity when there is no loss). */
  loss: Float64Array;
}

// State layout per channel: [0..17] stage 1 (Saturate2x's layout), [18..29]
// stage 2, [30] u₋₁, [31] w₋₁, [32, 33] bump TDF-II, [34] loss; [35] the
// largest |input| since takePeak (not flushed).
const STATE = 36;
const S2 = 18;
const HALF_INTERVAL = FLUSH_INTERVAL_FRAMES / 2;

export class TapeKernel {
  readonly latencyFrames: number;
  private readonly coefs: Float64Array;
  private readonly state: Float64Array[];
  private untilFlush: number;
  private halfIntervals = 0;

  constructor(readonly factor: 2 | 4, channels: number) {
    const f1 = stage1Filter(), f2 = stage2Filter();
    if (f1.branch0.length !== 4 || f1.branch1.length !== 3 || f2.branch0.length !== 2 || f2.branch1.length !== 2) {
      throw new Error("the tape kernels are written for 4 + 3 and 2 + 2 coefficients");
    }
    this.coefs = Float64Array.from([...f1.branch0, ...f1.branch1, ...f2.branch0, ...f2.branch1]);
    this.state = Array.from({ length: channels }, () => new Float64Array(STATE));
    this.latencyFrames = roundTripLatency(factor);
    this.untilFlush = factor === 4 ? HALF_INTERVAL : FLUSH_INTERVAL_FRAMES;
  }

  reset(): void {
    for (const s of this.state) s.fill(0);
    this.untilFlush = this.factor === 4 ? HALF_INTERVAL : FLUSH_INTERVAL_FRAMES;
    this.halfIntervals = 0;
  }

  /** The largest |input| of any channel since the last call. */
  takePeak(): number {
    let peak = 0;
    for (const s of this.state) {
      peak = Math.max(peak, s[35]);
      s[35] = 0;
    }
    return peak;
  }

  process(channels: Float64Array[], frames: number, p: TapeKernelParams): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      for (let c = 0; c < this.state.length; c++) {
        if (this.factor === 4) kernel4(this.coefs, this.state[c], channels[c], start, end, p.drive, p.emphasisK, p.dryGain, p.wetGain, p.bump, p.loss);
        else kernel2(this.coefs, this.state[c], channels[c], start, end, p.drive, p.emphasisK, p.dryGain, p.wetGain, p.bump, p.loss);
      }
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        // As in Saturate4x: stage 2 runs at twice the rate, so it is flushed every half interval.
        if (this.factor === 4) {
          this.untilFlush = HALF_INTERVAL;
          const full = ++this.halfIntervals % 2 === 0;
          for (const s of this.state) flushRange(s, full ? 0 : S2);
        } else {
          this.untilFlush = FLUSH_INTERVAL_FRAMES;
          for (const s of this.state) flushRange(s, 0);
        }
      }
      start = end;
    }
  }
}

function flushRange(s: Float64Array, from: number): void {
  // The peak (slot 35) is a measurement, not filter state: kept.
  const peak = s[35];
  if (from === 0) flushSmall(s);
  else flushSmall(s.subarray(from));
  s[35] = peak;
}

function kernel2(c: Float64Array, st: Float64Array, io: Float64Array, start: number, end: number, drive: number, k: number, dryGain: number, wetGain: number, bump: Float64Array, loss: Float64Array): void {
  const p0 = c[0], p1 = c[1], p2 = c[2], p3 = c[3], q0 = c[4], q1 = c[5], q2 = c[6];
  const kInv = 1 / (1 + k);
  const b0 = bump[0], b1 = bump[1], b2 = bump[2], a1 = bump[3], a2 = bump[4];
  const l0 = loss[0], l1 = loss[1], la = loss[2];
  let x1 = st[0], u1 = st[1], u2 = st[2], u3 = st[3], u4 = st[4], v1 = st[5], v2 = st[6], v3 = st[7];
  let e1 = st[8], o1 = st[9], r = st[10], d1 = st[11], d2 = st[12], d3 = st[13], d4 = st[14], f1 = st[15], f2 = st[16], f3 = st[17];
  let up = st[30], wp = st[31], z1 = st[32], z2 = st[33], zl = st[34], peak = st[35];
  for (let i = start; i < end; i++) {
    const x = io[i];
    const ax = x < 0 ? -x : x;
    peak = ax > peak ? ax : peak;
    const ua = p0 * (x - u1) + x1;
    const ub = p1 * (ua - u2) + u1;
    const uc = p2 * (ub - u3) + u2;
    const ud = p3 * (uc - u4) + u3;
    const va = q0 * (x - v1) + x1;
    const vb = q1 * (va - v2) + v1;
    const vc = q2 * (vb - v3) + v2;
    x1 = x;
    u1 = ua; u2 = ub; u3 = uc; u4 = ud;
    v1 = va; v2 = vb; v3 = vc;
    // The curve on the two 2× samples in order (ud, then vc).
    const m0 = drive * ud;
    const w0 = (tapeCurve(m0 + k * (m0 - up)) + k * wp) * kInv;
    const m1 = drive * vc;
    const w1 = (tapeCurve(m1 + k * (m1 - m0)) + k * w0) * kInv;
    up = m1; wp = w1;
    const even = dryGain * ud + wetGain * w0;
    const odd = dryGain * vc + wetGain * w1;
    const da = p0 * (even - d1) + e1;
    const db = p1 * (da - d2) + d1;
    const dc = p2 * (db - d3) + d2;
    const dd = p3 * (dc - d4) + d3;
    const fa = q0 * (odd - f1) + o1;
    const fb = q1 * (fa - f2) + f1;
    const fc = q2 * (fb - f3) + f2;
    e1 = even; o1 = odd;
    d1 = da; d2 = db; d3 = dc; d4 = dd;
    f1 = fa; f2 = fb; f3 = fc;
    const y = 0.5 * (dd + r);
    r = fc;
    const yb = b0 * y + z1;
    z1 = b1 * y - a1 * yb + z2;
    z2 = b2 * y - a2 * yb;
    const yl = l0 * yb + zl;
    zl = l1 * yb - la * yl;
    io[i] = yl;
  }
  st[0] = x1; st[1] = u1; st[2] = u2; st[3] = u3; st[4] = u4; st[5] = v1; st[6] = v2; st[7] = v3;
  st[8] = e1; st[9] = o1; st[10] = r; st[11] = d1; st[12] = d2; st[13] = d3; st[14] = d4; st[15] = f1; st[16] = f2; st[17] = f3;
  st[30] = up; st[31] = wp; st[32] = z1; st[33] = z2; st[34] = zl; st[35] = peak;
}

function kernel4(c: Float64Array, st: Float64Array, io: Float64Array, start: number, end: number, drive: number, k: number, dryGain: number, wetGain: number, bump: Float64Array, loss: Float64Array): void {
  const p0 = c[0], p1 = c[1], p2 = c[2], p3 = c[3], q0 = c[4], q1 = c[5], q2 = c[6];
  const s0 = c[7], s1 = c[8], t0 = c[9], t1 = c[10];
  const kInv = 1 / (1 + k);
  const b0 = bump[0], b1 = bump[1], b2 = bump[2], a1 = bump[3], a2 = bump[4];
  const l0 = loss[0], l1 = loss[1], la = loss[2];
  let x1 = st[0], u1 = st[1], u2 = st[2], u3 = st[3], u4 = st[4], v1 = st[5], v2 = st[6], v3 = st[7];
  let e1 = st[8], o1 = st[9], r = st[10], d1 = st[11], d2 = st[12], d3 = st[13], d4 = st[14], f1 = st[15], f2 = st[16], f3 = st[17];
  let w1 = st[18], g1 = st[19], g2 = st[20], h1 = st[21], h2 = st[22];
  let ze = st[23], zo = st[24], rr = st[25], k1 = st[26], k2 = st[27], n1 = st[28], n2 = st[29];
  let up = st[30], wp = st[31], z1 = st[32], z2 = st[33], zl = st[34], peak = st[35];
  for (let i = start; i < end; i++) {
    const x = io[i];
    const ax = x < 0 ? -x : x;
    peak = ax > peak ? ax : peak;
    // Stage 1 up.
    const ua = p0 * (x - u1) + x1;
    const ub = p1 * (ua - u2) + u1;
    const uc = p2 * (ub - u3) + u2;
    const ud = p3 * (uc - u4) + u3;
    const va = q0 * (x - v1) + x1;
    const vb = q1 * (va - v2) + v1;
    const vc = q2 * (vb - v3) + v2;
    x1 = x;
    u1 = ua; u2 = ub; u3 = uc; u4 = ud;
    v1 = va; v2 = vb; v3 = vc;
    // Stage 2 up on ud, then vc.
    const ga = s0 * (ud - g1) + w1;
    const gb = s1 * (ga - g2) + g1;
    const ha = t0 * (ud - h1) + w1;
    const hb = t1 * (ha - h2) + h1;
    const gc = s0 * (vc - ga) + ud;
    const gd = s1 * (gc - gb) + ga;
    const hc = t0 * (vc - ha) + ud;
    const hd = t1 * (hc - hb) + ha;
    w1 = vc;
    g1 = gc; g2 = gd; h1 = hc; h2 = hd;
    // The curve on the four 4× samples in order: gb, hb, gd, hd.
    const m0 = drive * gb;
    const c0 = (tapeCurve(m0 + k * (m0 - up)) + k * wp) * kInv;
    const m1 = drive * hb;
    const c1 = (tapeCurve(m1 + k * (m1 - m0)) + k * c0) * kInv;
    const m2 = drive * gd;
    const c2 = (tapeCurve(m2 + k * (m2 - m1)) + k * c1) * kInv;
    const m3 = drive * hd;
    const c3 = (tapeCurve(m3 + k * (m3 - m2)) + k * c2) * kInv;
    up = m3; wp = c3;
    const y0 = dryGain * gb + wetGain * c0;
    const y1 = dryGain * hb + wetGain * c1;
    const y2 = dryGain * gd + wetGain * c2;
    const y3 = dryGain * hd + wetGain * c3;
    // Stage 2 down.
    const ka = s0 * (y0 - k1) + ze;
    const kb = s1 * (ka - k2) + k1;
    const ma = t0 * (y1 - n1) + zo;
    const mb = t1 * (ma - n2) + n1;
    const even = 0.5 * (kb + rr);
    const kc = s0 * (y2 - ka) + y0;
    const kd = s1 * (kc - kb) + ka;
    const mc = t0 * (y3 - ma) + y1;
    const md = t1 * (mc - mb) + ma;
    const odd = 0.5 * (kd + mb);
    ze = y2; zo = y3; rr = md;
    k1 = kc; k2 = kd; n1 = mc; n2 = md;
    // Stage 1 down.
    const da = p0 * (even - d1) + e1;
    const db = p1 * (da - d2) + d1;
    const dc = p2 * (db - d3) + d2;
    const dd = p3 * (dc - d4) + d3;
    const fa = q0 * (odd - f1) + o1;
    const fb = q1 * (fa - f2) + f1;
    const fc = q2 * (fb - f3) + f2;
    e1 = even; o1 = odd;
    d1 = da; d2 = db; d3 = dc; d4 = dd;
    f1 = fa; f2 = fb; f3 = fc;
    const y = 0.5 * (dd + r);
    r = fc;
    // Base rate: head bump, then spacing loss.
    const yb = b0 * y + z1;
    z1 = b1 * y - a1 * yb + z2;
    z2 = b2 * y - a2 * yb;
    const yl = l0 * yb + zl;
    zl = l1 * yb - la * yl;
    io[i] = yl;
  }
  st[0] = x1; st[1] = u1; st[2] = u2; st[3] = u3; st[4] = u4; st[5] = v1; st[6] = v2; st[7] = v3;
  st[8] = e1; st[9] = o1; st[10] = r; st[11] = d1; st[12] = d2; st[13] = d3; st[14] = d4; st[15] = f1; st[16] = f2; st[17] = f3;
  st[18] = w1; st[19] = g1; st[20] = g2; st[21] = h1; st[22] = h2;
  st[23] = ze; st[24] = zo; st[25] = rr; st[26] = k1; st[27] = k2; st[28] = n1; st[29] = n2;
  st[30] = up; st[31] = wp; st[32] = z1; st[33] = z2; st[34] = zl; st[35] = peak;
}

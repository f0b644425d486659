// The 4× saturator in one pass, like Saturate2x: stage 1 up (base → 2×),
// stage 2 up on each of the two 2× samples (→ four 4× samples), the curve
// and the dry/wet mix on the four, stage 2 down on each pair, stage 1 down,
// per channel in one loop with the filter state in locals. The same
// filters, arithmetic order and flush positions as Oversampler(4) → mix →
// down (a test holds the two to the bit): stage 2's state is flushed every
// FLUSH_INTERVAL_FRAMES of its own (2×) samples, i.e. every half interval of
// base frames, stage 1's every interval.
// Per frame: 7 + 2·4 sections up, four curve values, 2·4 + 7 sections down.

import { FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { flushSmall, roundTripLatency, stage1Filter, stage2Filter } from "./oversampler.ts";
import { softClip } from "./soft-clip.ts";

const STAGE1_STATE = 18; // the layout of Saturate2x's kernel
const STAGE2_STATE = 12;
const HALF_INTERVAL = FLUSH_INTERVAL_FRAMES / 2;

export class Saturate4x {
  readonly latencyFrames = roundTripLatency(4);
  private readonly coefs: Float64Array; // stage 1: branch 0 (4), branch 1 (3); stage 2: branch 0 (2), branch 1 (2)
  private readonly state1: Float64Array[];
  private readonly state2: Float64Array[];
  private untilFlush = HALF_INTERVAL;
  private halfIntervals = 0;

  constructor(channels: number) {
    const f1 = stage1Filter(), f2 = stage2Filter();
    if (f1.branch0.length !== 4 || f1.branch1.length !== 3 || f2.branch0.length !== 2 || f2.branch1.length !== 2) {
      throw new Error("the 4× kernel is written for 4 + 3 and 2 + 2 coefficients");
    }
    this.coefs = Float64Array.from([...f1.branch0, ...f1.branch1, ...f2.branch0, ...f2.branch1]);
    this.state1 = Array.from({ length: channels }, () => new Float64Array(STAGE1_STATE));
    this.state2 = Array.from({ length: channels }, () => new Float64Array(STAGE2_STATE));
  }

  reset(): void {
    for (const s of this.state1) s.fill(0);
    for (const s of this.state2) s.fill(0);
    this.untilFlush = HALF_INTERVAL;
    this.halfIntervals = 0;
  }

  /** In place: x = down(dryGain·v + wetGain·curve(drive·v)), v = up(x), at 4×. */
  process(channels: Float64Array[], frames: number, drive: number, dryGain: number, wetGain: number): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      for (let c = 0; c < this.state1.length; c++) kernel(this.coefs, this.state1[c], this.state2[c], channels[c], start, end, drive, dryGain, wetGain);
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = HALF_INTERVAL;
        for (const s of this.state2) flushSmall(s);
        if (++this.halfIntervals % 2 === 0) for (const s of this.state1) flushSmall(s);
      }
      start = end;
    }
  }
}

function kernel(c: Float64Array, st: Float64Array, sv: Float64Array, io: Float64Array, start: number, end: number, drive: number, dryGain: number, wetGain: number): void {
  const p0 = c[0], p1 = c[1], p2 = c[2], p3 = c[3], q0 = c[4], q1 = c[5], q2 = c[6];
  const s0 = c[7], s1 = c[8], t0 = c[9], t1 = c[10];
  // Stage 1, as in Saturate2x.
  let x1 = st[0], u1 = st[1], u2 = st[2], u3 = st[3], u4 = st[4], v1 = st[5], v2 = st[6], v3 = st[7];
  let e1 = st[8], o1 = st[9], r = st[10], d1 = st[11], d2 = st[12], d3 = st[13], d4 = st[14], f1 = st[15], f2 = st[16], f3 = st[17];
  // Stage 2 up: previous input, branch 0's and branch 1's sections; down: previous
  // even and odd inputs, the odd branch's last output, the sections.
  let w1 = sv[0], g1 = sv[1], g2 = sv[2], h1 = sv[3], h2 = sv[4];
  let ze = sv[5], zo = sv[6], rr = sv[7], k1 = sv[8], k2 = sv[9], m1 = sv[10], m2 = sv[11];
  for (let i = start; i < end; i++) {
    const x = io[i];
    // Stage 1 up: the two 2× samples.
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
    // Stage 2 up on the first (ud), then the second (vc).
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
    // The four 4× samples, in order: gb, hb, gd, hd.
    const y0 = dryGain * gb + wetGain * softClip(drive * gb);
    const y1 = dryGain * hb + wetGain * softClip(drive * hb);
    const y2 = dryGain * gd + wetGain * softClip(drive * gd);
    const y3 = dryGain * hd + wetGain * softClip(drive * hd);
    // Stage 2 down: (y0, y1) → the first 2× sample, (y2, y3) → the second.
    const ka = s0 * (y0 - k1) + ze;
    const kb = s1 * (ka - k2) + k1;
    const ma = t0 * (y1 - m1) + zo;
    const mb = t1 * (ma - m2) + m1;
    const even = 0.5 * (kb + rr);
    const kc = s0 * (y2 - ka) + y0;
    const kd = s1 * (kc - kb) + ka;
    const mc = t0 * (y3 - ma) + y1;
    const md = t1 * (mc - mb) + ma;
    const odd = 0.5 * (kd + mb);
    ze = y2; zo = y3; rr = md;
    k1 = kc; k2 = kd; m1 = mc; m2 = md;
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
    io[i] = 0.5 * (dd + r);
    r = fc;
  }
  st[0] = x1; st[1] = u1; st[2] = u2; st[3] = u3; st[4] = u4; st[5] = v1; st[6] = v2; st[7] = v3;
  st[8] = e1; st[9] = o1; st[10] = r; st[11] = d1; st[12] = d2; st[13] = d3; st[14] = d4; st[15] = f1; st[16] = f2; st[17] = f3;
  sv[0] = w1; sv[1] = g1; sv[2] = g2; sv[3] = h1; sv[4] = h2;
  sv[5] = ze; sv[6] = zo; sv[7] = rr; sv[8] = k1; sv[9] = k2; sv[10] = m1; sv[11] = m2;
}

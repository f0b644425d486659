// The 2× saturator in one pass (the common setting): half-band up, the
// curve and the dry/wet mix at the high rate, half-band down, per channel in
// one loop. The same filters and arithmetic order as Oversampler(2) → mix →
// Oversampler(2) down (a test holds the two to the bit); what it saves is
// the 2× buffer, the passes over it and the loops over the coefficients.
// Per frame: 7 all-pass sections up (4 on the even branch, 3 on the odd),
// two curve values, 7 sections down.
//
// Written out, the filter state in locals for the whole block: a loop over
// the sections, with the state in an array, runs several times slower in V8
// (a bounds check and a load and store per section per frame).

import { FLUSH_INTERVAL_FRAMES } from "../filters/paired-biquad.ts";
import { flushSmall, roundTripLatency, STAGE1_COEFFS, stage1Filter } from "./oversampler.ts";
import { softClip } from "./soft-clip.ts";

const STATE = 18;

export class Saturate2x {
  readonly latencyFrames = roundTripLatency(2);
  private readonly coefs: Float64Array; // branch 0 (4), then branch 1 (3)
  private readonly state: Float64Array[]; // per channel, the layout of kernel()
  private untilFlush = FLUSH_INTERVAL_FRAMES;

  constructor(channels: number) {
    const f = stage1Filter();
    if (STAGE1_COEFFS !== 7 || f.branch0.length !== 4) throw new Error("the 2× kernel is written for 4 + 3 coefficients");
    this.coefs = Float64Array.from([...f.branch0, ...f.branch1]);
    this.state = Array.from({ length: channels }, () => new Float64Array(STATE));
  }

  reset(): void {
    for (const s of this.state) s.fill(0);
    this.untilFlush = FLUSH_INTERVAL_FRAMES;
  }

  /** In place: x = down(dryGain·v + wetGain·curve(drive·v)), v = up(x). */
  process(channels: Float64Array[], frames: number, drive: number, dryGain: number, wetGain: number): void {
    let start = 0;
    while (start < frames) {
      const end = Math.min(frames, start + this.untilFlush);
      for (let c = 0; c < this.state.length; c++) kernel(this.coefs, this.state[c], channels[c], start, end, drive, dryGain, wetGain);
      this.untilFlush -= end - start;
      if (this.untilFlush === 0) {
        this.untilFlush = FLUSH_INTERVAL_FRAMES;
        for (const s of this.state) flushSmall(s);
      }
      start = end;
    }
  }
}

function kernel(c: Float64Array, st: Float64Array, io: Float64Array, start: number, end: number, drive: number, dryGain: number, wetGain: number): void {
  const p0 = c[0], p1 = c[1], p2 = c[2], p3 = c[3], q0 = c[4], q1 = c[5], q2 = c[6];
  // Up: previous input, branch 0's and branch 1's section outputs.
  let x1 = st[0], u1 = st[1], u2 = st[2], u3 = st[3], u4 = st[4], v1 = st[5], v2 = st[6], v3 = st[7];
  // Down: previous even and odd inputs, the odd branch's last output, the sections.
  let e1 = st[8], o1 = st[9], r = st[10], d1 = st[11], d2 = st[12], d3 = st[13], d4 = st[14], f1 = st[15], f2 = st[16], f3 = st[17];
  for (let i = start; i < end; i++) {
    const x = io[i];
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
    const even = dryGain * ud + wetGain * softClip(drive * ud);
    const odd = dryGain * vc + wetGain * softClip(drive * vc);
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
}

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
// (a bounds check and a load and store per section per frame). Stereo runs
// both channels in one loop: each frame's path (up, curve, down) is a long
// chain of dependent operations, and two independent ones overlap (about
// 15% faster, despite V8 spilling some of the 36 state values).

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
      if (this.state.length === 2) stereoKernel(this.coefs, this.state[0], this.state[1], channels[0], channels[1], start, end, drive, dryGain, wetGain);
      else for (let c = 0; c < this.state.length; c++) kernel(this.coefs, this.state[c], channels[c], start, end, drive, dryGain, wetGain);
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

/** kernel() for two channels at once: the same arithmetic per channel. */
function stereoKernel(c: Float64Array, st: Float64Array, sr: Float64Array, left: Float64Array, right: Float64Array, start: number, end: number, drive: number, dryGain: number, wetGain: number): void {
  const p0 = c[0], p1 = c[1], p2 = c[2], p3 = c[3], q0 = c[4], q1 = c[5], q2 = c[6];
  let x1 = st[0], u1 = st[1], u2 = st[2], u3 = st[3], u4 = st[4], v1 = st[5], v2 = st[6], v3 = st[7];
  let e1 = st[8], o1 = st[9], r = st[10], d1 = st[11], d2 = st[12], d3 = st[13], d4 = st[14], f1 = st[15], f2 = st[16], f3 = st[17];
  let X1 = sr[0], U1 = sr[1], U2 = sr[2], U3 = sr[3], U4 = sr[4], V1 = sr[5], V2 = sr[6], V3 = sr[7];
  let E1 = sr[8], O1 = sr[9], R = sr[10], D1 = sr[11], D2 = sr[12], D3 = sr[13], D4 = sr[14], F1 = sr[15], F2 = sr[16], F3 = sr[17];
  for (let i = start; i < end; i++) {
    const x = left[i], X = right[i];
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
    const Ua = p0 * (X - U1) + X1;
    const Ub = p1 * (Ua - U2) + U1;
    const Uc = p2 * (Ub - U3) + U2;
    const Ud = p3 * (Uc - U4) + U3;
    const Va = q0 * (X - V1) + X1;
    const Vb = q1 * (Va - V2) + V1;
    const Vc = q2 * (Vb - V3) + V2;
    X1 = X;
    U1 = Ua; U2 = Ub; U3 = Uc; U4 = Ud;
    V1 = Va; V2 = Vb; V3 = Vc;
    const even = dryGain * ud + wetGain * softClip(drive * ud);
    const odd = dryGain * vc + wetGain * softClip(drive * vc);
    const Even = dryGain * Ud + wetGain * softClip(drive * Ud);
    const Odd = dryGain * Vc + wetGain * softClip(drive * Vc);
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
    const Da = p0 * (Even - D1) + E1;
    const Db = p1 * (Da - D2) + D1;
    const Dc = p2 * (Db - D3) + D2;
    const Dd = p3 * (Dc - D4) + D3;
    const Fa = q0 * (Odd - F1) + O1;
    const Fb = q1 * (Fa - F2) + F1;
    const Fc = q2 * (Fb - F3) + F2;
    E1 = Even; O1 = Odd;
    D1 = Da; D2 = Db; D3 = Dc; D4 = Dd;
    F1 = Fa; F2 = Fb; F3 = Fc;
    left[i] = 0.5 * (dd + r);
    r = fc;
    right[i] = 0.5 * (Dd + R);
    R = Fc;
  }
  st[0] = x1; st[1] = u1; st[2] = u2; st[3] = u3; st[4] = u4; st[5] = v1; st[6] = v2; st[7] = v3;
  st[8] = e1; st[9] = o1; st[10] = r; st[11] = d1; st[12] = d2; st[13] = d3; st[14] = d4; st[15] = f1; st[16] = f2; st[17] = f3;
  sr[0] = X1; sr[1] = U1; sr[2] = U2; sr[3] = U3; sr[4] = U4; sr[5] = V1; sr[6] = V2; sr[7] = V3;
  sr[8] = E1; sr[9] = O1; sr[10] = R; sr[11] = D1; sr[12] = D2; sr[13] = D3; sr[14] = D4; sr[15] = F1; sr[16] = F2; sr[17] = F3;
}

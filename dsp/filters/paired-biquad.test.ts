// PairedBiquad runs the arithmetic of Biquad (transposed direct form II, the
// RBJ cookbook coefficients) two channels per loop; Biquad is the reference
// here, and the mid/side band the matrix of mid-side.ts around it.
import { describe, expect, it } from "vitest";
import { whiteNoise } from "../testing/signals.ts";
import { Biquad } from "./biquad.ts";
import { designBiquad } from "./biquad-design.ts";
import { fromMidSide, toMidSide } from "./mid-side.ts";
import { FLUSH_INTERVAL_FRAMES, PairedBiquad } from "./paired-biquad.ts";

const FS = 48000;
const peak = designBiquad("peak", { freqHz: 900, q: 1.3, gainDb: -4 }, FS);

/** Runs `body` over `n` frames in blocks of `block`, on subarrays. */
function inBlocks(n: number, block: number, body: (start: number, frames: number) => void): void {
  for (let s = 0; s < n; s += block) body(s, Math.min(block, n - s));
}

describe("PairedBiquad (reference: Biquad, same arithmetic)", () => {
  it("1, 2 and 3 channels give exactly Biquad's output, whatever the block size", () => {
    for (const channels of [1, 2, 3]) {
      const input = Array.from({ length: channels }, (_, c) => whiteNoise(5000, 20 + c));
      const ref = input.map((x) => x.slice());
      new Biquad(peak, channels).process(ref, 5000);
      for (const block of [1, 137, 5000]) {
        const data = input.map((x) => x.slice());
        const pb = new PairedBiquad(peak, channels);
        inBlocks(5000, block, (s, n) => pb.process(data.map((x) => x.subarray(s, s + n)), n));
        for (let c = 0; c < channels; c++) expect(data[c]).toEqual(ref[c]);
      }
    }
  });

  it("processInto leaves the input alone; processChannel filters one buffer", () => {
    const x = [whiteNoise(3000, 1), whiteNoise(3000, 2)];
    const keep = x.map((v) => v.slice());
    const out = [new Float64Array(3000), new Float64Array(3000)];
    new PairedBiquad(peak, 2).processInto(x, out, 3000);
    expect(x).toEqual(keep);
    const ref = keep.map((v) => v.slice());
    new Biquad(peak, 2).process(ref, 3000);
    expect(out).toEqual(ref);
    const one = keep[1].slice();
    new PairedBiquad(peak, 1).processChannel(one, 3000);
    expect(one).toEqual(ref[1]);
  });

  it("a mid or side band equals toMidSide → Biquad on M or S → fromMidSide", () => {
    for (const side of [false, true]) {
      const l = whiteNoise(4000, 5), r = whiteNoise(4000, 6);
      const rl = l.slice(), rr = r.slice();
      toMidSide(rl, rr, 4000);
      new Biquad(peak, 1).processChannel(side ? rr : rl, 0, 4000);
      fromMidSide(rl, rr, 4000);
      const pb = new PairedBiquad(peak, 1);
      inBlocks(4000, 333, (s, n) => pb.processMidSide(l.subarray(s, s + n), r.subarray(s, s + n), n, side));
      expect(l).toEqual(rl);
      expect(r).toEqual(rr);
    }
  });

  it(`silence after an impulse decays to exact zeros, never subnormal (flushed every ${FLUSH_INTERVAL_FRAMES} frames)`, () => {
    const pb = new PairedBiquad(designBiquad("highPass", { freqHz: 20, q: 0.5 }, FS), 2);
    const l = new Float64Array(200000), r = new Float64Array(200000);
    l[0] = 1;
    r[0] = -0.5;
    inBlocks(200000, 480, (s, n) => pb.process([l.subarray(s, s + n), r.subarray(s, s + n)], n));
    for (const x of [l, r]) {
      expect(x[x.length - 1]).toBe(0);
      expect(x.filter((v) => v !== 0 && Math.abs(v) < 2.2250738585072014e-308).length).toBe(0);
    }
    // reset() restores the fresh state.
    const a = new Float64Array(8), b = new Float64Array(8);
    a[0] = b[0] = 1;
    pb.reset();
    pb.processChannel(a, 8);
    new PairedBiquad(designBiquad("highPass", { freqHz: 20, q: 0.5 }, FS), 2).processChannel(b, 8);
    expect(a).toEqual(b);
  });
});

// Checks against the RBJ Audio EQ Cookbook (W3C note) and, as a second
// opinion, the Web Audio formulas of `biquad-coeffs-webaudio`.
import { createRequire } from "node:module";
import { describe, expect, it } from "vitest";
import { createRng, whiteNoise } from "../testing/signals.ts";
import { Biquad } from "./biquad.ts";
import { type BiquadCoeffs, type BiquadShape, biquadMagnitudeDb, designBiquad } from "./biquad-design.ts";
import { fromMidSide, toMidSide } from "./mid-side.ts";

const require = createRequire(import.meta.url);
const webAudio = require("biquad-coeffs-webaudio") as Record<string, (f: number, q: number, g?: number) => number[]>;

// Independent evaluation of the cookbook: returns [b0, b1, b2, a0, a1, a2] unnormalised.
function cookbook(shape: BiquadShape, f0: number, fs: number, dBgain: number, Q: number | null, S: number | null): number[] {
  const A = 10 ** (dBgain / 40);
  const w0 = (2 * Math.PI * f0) / fs;
  const cs = Math.cos(w0);
  const sn = Math.sin(w0);
  const alpha = S !== null ? (sn / 2) * Math.sqrt((A + 1 / A) * (1 / S - 1) + 2) : sn / (2 * (Q as number));
  const sq = 2 * Math.sqrt(A) * alpha;
  switch (shape) {
    case "lowPass": return [(1 - cs) / 2, 1 - cs, (1 - cs) / 2, 1 + alpha, -2 * cs, 1 - alpha];
    case "highPass": return [(1 + cs) / 2, -(1 + cs), (1 + cs) / 2, 1 + alpha, -2 * cs, 1 - alpha];
    case "bandPass": return [alpha, 0, -alpha, 1 + alpha, -2 * cs, 1 - alpha];
    case "notch": return [1, -2 * cs, 1, 1 + alpha, -2 * cs, 1 - alpha];
    case "allPass": return [1 - alpha, -2 * cs, 1 + alpha, 1 + alpha, -2 * cs, 1 - alpha];
    case "peak": return [1 + alpha * A, -2 * cs, 1 - alpha * A, 1 + alpha / A, -2 * cs, 1 - alpha / A];
    case "lowShelf": return [
      A * ((A + 1) - (A - 1) * cs + sq), 2 * A * ((A - 1) - (A + 1) * cs), A * ((A + 1) - (A - 1) * cs - sq),
      (A + 1) + (A - 1) * cs + sq, -2 * ((A - 1) + (A + 1) * cs), (A + 1) + (A - 1) * cs - sq];
    case "highShelf": return [
      A * ((A + 1) + (A - 1) * cs + sq), -2 * A * ((A - 1) + (A + 1) * cs), A * ((A + 1) + (A - 1) * cs - sq),
      (A + 1) - (A - 1) * cs + sq, 2 * ((A - 1) - (A + 1) * cs), (A + 1) - (A - 1) * cs - sq];
  }
}

function expectCoeffs(c: BiquadCoeffs, ref: number[], tol: number): void {
  const [b0, b1, b2, a0, a1, a2] = ref;
  expect(Math.abs(c.b0 - b0 / a0)).toBeLessThan(tol);
  expect(Math.abs(c.b1 - b1 / a0)).toBeLessThan(tol);
  expect(Math.abs(c.b2 - b2 / a0)).toBeLessThan(tol);
  expect(Math.abs(c.a1 - a1 / a0)).toBeLessThan(tol);
  expect(Math.abs(c.a2 - a2 / a0)).toBeLessThan(tol);
}

const shapes: BiquadShape[] = ["peak", "lowShelf", "highShelf", "highPass", "lowPass", "notch", "allPass", "bandPass"];
const cases = [
  { f0: 31, q: 0.5, s: 0.4, g: -9, fs: 44100 },
  { f0: 1000, q: 0.7071, s: 1, g: 6, fs: 48000 },
  { f0: 4500, q: 2.5, s: 0.8, g: -3.5, fs: 96000 },
  { f0: 15000, q: 8, s: 1.2, g: 12, fs: 192000 },
];

describe("RBJ Audio EQ Cookbook coefficients", () => {
  for (const shape of shapes) {
    it(`${shape} equals the cookbook formulas within 1e-12`, () => {
      for (const { f0, q, s, g, fs } of cases) {
        expectCoeffs(designBiquad(shape, { freqHz: f0, q, gainDb: g }, fs), cookbook(shape, f0, fs, g, q, null), 1e-12);
        if (shape === "lowShelf" || shape === "highShelf") {
          expectCoeffs(designBiquad(shape, { freqHz: f0, slope: s, gainDb: g }, fs), cookbook(shape, f0, fs, g, null, s), 1e-12);
        }
      }
    });
  }

  it("second opinion: biquad-coeffs-webaudio agrees within 1e-12", () => {
    for (const { f0, q, g, fs } of cases) {
      const nf = f0 / fs;
      const pairs: Array<[BiquadShape, number[]]> = [
        ["peak", webAudio.peaking(nf, q, g)],
        ["notch", webAudio.notch(nf, q)],
        ["allPass", webAudio.allpass(nf, q)],
        ["bandPass", webAudio.bandpass(nf, q)],
      ];
      // Web Audio's low/high-pass Q is in dB and clamped at 0 dB and above, so only Q >= 1 compares.
      if (q >= 1) {
        pairs.push(["lowPass", webAudio.lowpass(nf, 20 * Math.log10(q))], ["highPass", webAudio.highpass(nf, 20 * Math.log10(q))]);
      }
      for (const [shape, [b0, b1, b2, a1, a2]] of pairs) {
        expectCoeffs(designBiquad(shape, { freqHz: f0, q, gainDb: g }, fs), [b0, b1, b2, 1, a1, a2], 1e-12);
      }
      // Web Audio shelves are the cookbook shelves with S = 1.
      const ls = webAudio.lowshelf(nf, 0, g);
      const hs = webAudio.highshelf(nf, 0, g);
      expectCoeffs(designBiquad("lowShelf", { freqHz: f0, slope: 1, gainDb: g }, fs), [ls[0], ls[1], ls[2], 1, ls[3], ls[4]], 1e-12);
      expectCoeffs(designBiquad("highShelf", { freqHz: f0, slope: 1, gainDb: g }, fs), [hs[0], hs[1], hs[2], 1, hs[3], hs[4]], 1e-12);
    }
  });
});

describe("analytic magnitudes (cookbook)", () => {
  it("peak reaches its gain at f0; unity at DC and Nyquist", () => {
    for (const { f0, q, g, fs } of cases) {
      const c = designBiquad("peak", { freqHz: f0, q, gainDb: g }, fs);
      expect(biquadMagnitudeDb(c, f0, fs)).toBeCloseTo(g, 9);
      expect(biquadMagnitudeDb(c, 0, fs)).toBeCloseTo(0, 9);
      expect(biquadMagnitudeDb(c, fs / 2, fs)).toBeCloseTo(0, 9);
    }
  });

  it("shelves: half the gain at f0, full gain at their far end, 0 dB at the other", () => {
    for (const { f0, s, g, fs } of cases) {
      const lo = designBiquad("lowShelf", { freqHz: f0, slope: s, gainDb: g }, fs);
      const hi = designBiquad("highShelf", { freqHz: f0, slope: s, gainDb: g }, fs);
      expect(biquadMagnitudeDb(lo, f0, fs)).toBeCloseTo(g / 2, 9);
      expect(biquadMagnitudeDb(hi, f0, fs)).toBeCloseTo(g / 2, 9);
      expect(biquadMagnitudeDb(lo, 0, fs)).toBeCloseTo(g, 9);
      expect(biquadMagnitudeDb(lo, fs / 2, fs)).toBeCloseTo(0, 9);
      expect(biquadMagnitudeDb(hi, 0, fs)).toBeCloseTo(0, 9);
      expect(biquadMagnitudeDb(hi, fs / 2, fs)).toBeCloseTo(g, 9);
    }
  });

  it("pass, notch, all-pass and band-pass shapes at DC, f0 and Nyquist", () => {
    for (const { f0, q, fs } of cases) {
      const d = (shape: BiquadShape, f: number) => biquadMagnitudeDb(designBiquad(shape, { freqHz: f0, q }, fs), f, fs);
      // Cookbook: |H(f0)| = Q for the 2nd-order low- and high-pass.
      expect(d("lowPass", f0)).toBeCloseTo(20 * Math.log10(q), 9);
      expect(d("highPass", f0)).toBeCloseTo(20 * Math.log10(q), 9);
      expect(d("lowPass", 0)).toBeCloseTo(0, 9);
      expect(d("highPass", fs / 2)).toBeCloseTo(0, 9);
      expect(d("lowPass", fs / 2)).toBeLessThan(-200);
      expect(d("highPass", 0)).toBeLessThan(-200);
      expect(d("notch", f0)).toBeLessThan(-200);
      expect(d("notch", 0)).toBeCloseTo(0, 9);
      expect(d("bandPass", f0)).toBeCloseTo(0, 9);
      expect(d("bandPass", 0)).toBeLessThan(-200);
      for (const f of [0, f0 / 3, f0, Math.min(3 * f0, fs / 2), fs / 2]) expect(d("allPass", f)).toBeCloseTo(0, 9);
    }
  });
});

describe("Biquad processing", () => {
  it("steady-state sine through the processor matches the analytic magnitude", () => {
    const fs = 48000;
    const c = designBiquad("peak", { freqHz: 2000, q: 1.4, gainDb: 7 }, fs);
    for (const f of [500, 2000, 6000]) {
      const n = 48000;
      const buf = new Float64Array(n);
      for (let i = 0; i < n; i++) buf[i] = Math.sin((2 * Math.PI * f * i) / fs);
      new Biquad(c, 1).processChannel(buf, 0, n);
      // RMS over whole periods of the second half: amplitude = RMS·√2.
      let sumSq = 0;
      for (let i = n / 2; i < n; i++) sumSq += buf[i] * buf[i];
      expect(20 * Math.log10(Math.sqrt((2 * sumSq) / (n / 2)))).toBeCloseTo(biquadMagnitudeDb(c, f, fs), 3);
    }
  });

  it("block size never changes the output (blocks of 1, 137, 4096)", () => {
    const c = designBiquad("lowShelf", { freqHz: 120, slope: 0.7, gainDb: 4 }, 44100);
    const input = [whiteNoise(20000, 7), whiteNoise(20000, 8)];
    const outputs = [1, 137, 4096].map((block) => {
      const bq = new Biquad(c, 2);
      const data = input.map((x) => Float64Array.from(x));
      for (let start = 0; start < 20000; start += block) {
        const n = Math.min(block, 20000 - start);
        bq.process(data.map((x) => x.subarray(start, start + n)), n);
      }
      return data;
    });
    for (const out of outputs.slice(1)) {
      expect(out[0]).toEqual(outputs[0][0]);
      expect(out[1]).toEqual(outputs[0][1]);
    }
  });

  it("reset clears the state; silence decays to exact zeros (no subnormals)", () => {
    const c = designBiquad("highPass", { freqHz: 20, q: 0.5 }, 48000);
    const bq = new Biquad(c, 1);
    const buf = new Float64Array(200000);
    buf[0] = 1;
    bq.processChannel(buf, 0, buf.length);
    expect(buf[buf.length - 1]).toBe(0);
    for (let i = 100000; i < buf.length; i++) expect(Math.abs(buf[i]) === 0 || Math.abs(buf[i]) > 2.2250738585072014e-308).toBe(true);
    const imp = new Float64Array(4);
    imp[0] = 1;
    const fresh = Float64Array.from(imp);
    bq.reset();
    bq.processChannel(imp, 0, 4);
    new Biquad(c, 1).processChannel(fresh, 0, 4);
    expect(imp).toEqual(fresh);
  });
});

describe("mid/side matrix", () => {
  it("M=(L+R)/2, S=(L−R)/2 and the inverse restore L and R", () => {
    const rng = createRng(3);
    const l = Float64Array.from({ length: 64 }, () => rng() * 2 - 1);
    const r = Float64Array.from({ length: 64 }, () => rng() * 2 - 1);
    const m = Float64Array.from(l);
    const s = Float64Array.from(r);
    toMidSide(m, s, 64);
    for (let i = 0; i < 64; i++) {
      expect(m[i]).toBeCloseTo((l[i] + r[i]) / 2, 15);
      expect(s[i]).toBeCloseTo((l[i] - r[i]) / 2, 15);
    }
    fromMidSide(m, s, 64);
    for (let i = 0; i < 64; i++) {
      expect(m[i]).toBeCloseTo(l[i], 15);
      expect(s[i]).toBeCloseTo(r[i], 15);
    }
  });
});

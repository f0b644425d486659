import { describe, expect, it } from "vitest";
import { Compressor, CONTROL_MIN_TIME_MS, controlFrames, controlFramesFor, type CompressorSettings } from "./compressor.ts";
import { gainReductionDb } from "./gain-computer.ts";
import { GainSmoother } from "./gain-smoother.ts";
import { RmsDetector } from "./rms-detector.ts";
import { sine, whiteNoise } from "../testing/signals.ts";
import { Biquad } from "../filters/biquad.ts";
import { BUTTERWORTH_Q, designBiquad } from "../filters/biquad-design.ts";
import { linearToDb } from "../units.ts";

const FS = 48000;

function settings(over: Partial<CompressorSettings>): CompressorSettings {
  return { thresholdDb: -20, ratio: 4, kneeDb: 0, attackMs: 5, releaseMs: 50, makeupDb: 0, rmsWindowMs: 50, ...over };
}

/** Runs a mono signal through the detector, returns GR (dB) per frame. */
function grTrace(comp: Compressor, signal: Float64Array): Float64Array {
  const out = new Float64Array(signal.length);
  const block = 1024;
  const buf = new Float64Array(block);
  const part = new Float64Array(block);
  for (let off = 0; off < signal.length; off += block) {
    const n = Math.min(block, signal.length - off);
    buf.set(signal.subarray(off, off + n));
    comp.detect([buf], n, part);
    out.set(part.subarray(0, n), off);
  }
  return out;
}

describe("static curve (analytic: hard knee (L−T)(1−1/R); quadratic knee (1−1/R)(L−T+W/2)²/(2W))", () => {
  it("pure function matches the formulas", () => {
    expect(gainReductionDb(-30, -20, 4, 0)).toBe(0);
    expect(gainReductionDb(-10, -20, 4, 0)).toBeCloseTo(7.5, 12);
    // Knee W = 10 around T = −20: at L = T the reduction is slope·(W/2)²/(2W) = 0.75·25/20.
    expect(gainReductionDb(-20, -20, 4, 10)).toBeCloseTo((0.75 * 25) / 20, 12);
    expect(gainReductionDb(-25.0001, -20, 4, 10)).toBe(0);
    // Continuous at the knee's upper edge.
    expect(gainReductionDb(-15 - 1e-9, -20, 4, 10)).toBeCloseTo(gainReductionDb(-15 + 1e-9, -20, 4, 10), 6);
  });

  it.each([
    [-6, 4, 0],
    [-12, 2, 0],
    [-18, 8, 0],
    [-30, 4, 0],
    [-20, 3, 12],
    [-16, 3, 12],
  ])("steady 1 kHz sine at %d dBFS peak, ratio %d, knee %d dB: GR within 0.05 dB", (peakDb, ratio, kneeDb) => {
    const comp = new Compressor(FS, 1, settings({ ratio, kneeDb }), 1024);
    const gr = grTrace(comp, sine(FS, 1000, FS, peakDb));
    // RMS of a sine = peak − 3.0103 dB.
    const levelDb = peakDb + 10 * Math.log10(0.5);
    const expected = gainReductionDb(levelDb, -20, ratio, kneeDb);
    const tail = gr.subarray(FS - 4800);
    const mean = tail.reduce((a, b) => a + b, 0) / tail.length;
    expect(Math.abs(mean - expected)).toBeLessThan(0.05);
  });
});

describe("time constants (analytic one-pole step response: 1 − 1/e at τ)", () => {
  const crossing = (next: (i: number) => number, goal: (v: number) => boolean): number => {
    for (let i = 0; i < FS * 10; i++) if (goal(next(i))) return i + 1;
    return Infinity;
  };

  it.each([1, 10, 80, 300])("attack %d ms", (attackMs) => {
    const s = new GainSmoother(FS, attackMs, 100);
    const frames = crossing(() => s.next(10), (v) => v >= 10 * (1 - 1 / Math.E));
    expect(Math.abs(frames / FS - attackMs / 1000)).toBeLessThan((0.02 * attackMs) / 1000 + 1 / FS);
  });

  it.each([5, 100, 1000, 3000])("release %d ms", (releaseMs) => {
    const s = new GainSmoother(FS, 0.1, releaseMs);
    for (let i = 0; i < FS; i++) s.next(10);
    const frames = crossing(() => s.next(0), (v) => v <= 10 / Math.E);
    expect(Math.abs(frames / FS - releaseMs / 1000)).toBeLessThan((0.02 * releaseMs) / 1000 + 1 / FS);
  });

  it.each([10, 80, 300])("on the control-rate path (a step every 4 frames): attack %d ms and release 10× longer, within 2% plus one step", (attackMs) => {
    const k = controlFrames(FS), rate = FS / k;
    const releaseMs = 10 * attackMs;
    const s = new GainSmoother(rate, attackMs, releaseMs);
    const steps = crossing(() => s.next(10), (v) => v >= 10 * (1 - 1 / Math.E));
    expect(Math.abs(steps / rate - attackMs / 1000)).toBeLessThan((0.02 * attackMs) / 1000 + 1 / rate);
    for (let i = 0; i < rate * 10; i++) s.next(10);
    const back = crossing(() => s.next(0), (v) => v <= 10 / Math.E);
    expect(Math.abs(back / rate - releaseMs / 1000)).toBeLessThan((0.02 * releaseMs) / 1000 + 1 / rate);
  });

  it("RMS detector follows P·(1 − a^(n+1)) on a level step", () => {
    const windowMs = 20;
    const d = new RmsDetector(FS, 2, windowMs);
    const frames = 4800;
    const l = new Float64Array(frames).fill(0.5);
    const r = new Float64Array(frames).fill(-0.25);
    const out = new Float64Array(frames);
    d.process([l, r], frames, out);
    const a = Math.exp(-1000 / (windowMs * FS));
    for (const n of [0, 10, 959, 960, 2000, 4799]) expect(out[n]).toBeCloseTo(0.25 * (1 - a ** (n + 1)), 12);
    // At t = τ (960 frames) the mean square is 1 − 1/e of the final value (max of the two channels).
    expect(Math.abs(out[959] / 0.25 - (1 - 1 / Math.E))).toBeLessThan(0.001);
  });
});

describe("RMS detector with its sidechain high-pass (reference: Biquad, the RBJ cookbook high-pass, then the plain detector)", () => {
  it("equals filtering first and detecting after (within 1e-12 relative: the stereo loop orders its sums differently), for mono and stereo and any block size; silence leaves exact zeros", () => {
    const hp = designBiquad("highPass", { freqHz: 90, q: BUTTERWORTH_Q }, FS);
    for (const channels of [1, 2]) {
      const input = [whiteNoise(6000, 41), whiteNoise(6000, 42)].slice(0, channels);
      const filtered = input.map((x) => x.slice());
      new Biquad(hp, channels).process(filtered, 6000);
      const ref = new Float64Array(6000);
      new RmsDetector(FS, channels, 20).process(filtered, 6000, ref);
      let first = new Float64Array(0);
      for (const block of [6000, 1, 137]) {
        const d = new RmsDetector(FS, channels, 20, 90);
        const out = new Float64Array(6000);
        for (let s = 0; s < 6000; s += block) {
          const n = Math.min(block, 6000 - s);
          d.process(input.map((x) => x.subarray(s, s + n)), n, out.subarray(s, s + n));
        }
        let worst = 0;
        for (let i = 0; i < 6000; i++) worst = Math.max(worst, Math.abs(out[i] / ref[i] - 1));
        expect(worst).toBeLessThan(1e-12);
        if (block === 6000) first = out;
        else expect(out).toEqual(first); // block size never changes a bit
      }
    }
    // An impulse, then silence: the filter state is flushed, the mean square decays to exact 0.
    const d = new RmsDetector(FS, 2, 5, 90);
    const l = new Float64Array(FS * 4), r = new Float64Array(FS * 4);
    l[0] = 1;
    const out = new Float64Array(FS * 4);
    d.process([l, r], FS * 4, out);
    expect(out[FS * 4 - 1]).toBe(0);
  });
});

describe("auto release (our design targets, docs/auto-release.md)", () => {
  const auto = settings({ thresholdDb: -30, ratio: 4, kneeDb: 0, attackMs: 5, releaseMs: "auto", rmsWindowMs: 5 });

  function recoveryMs(gr: Float64Array, endFrame: number): number {
    const grAtEnd = Math.max(...gr.subarray(endFrame - 480, endFrame));
    for (let i = endFrame; i < gr.length; i++) if (gr[i] <= 0.1 * grAtEnd) return ((i - endFrame) / FS) * 1000;
    return Infinity;
  }

  it("after a 20 ms burst the reduction falls to 10% of its peak within 150 ms", () => {
    const burst = new Float64Array(FS);
    burst.set(sine(960, 1000, FS, linearToDb(0.5)), 4800);
    const gr = grTrace(new Compressor(FS, 1, auto, 1024), burst);
    expect(Math.max(...gr)).toBeGreaterThan(6);
    expect(recoveryMs(gr, 4800 + 960)).toBeLessThan(150);
  });

  it("after 3 s of about 6 dB reduction the recovery takes longer than 500 ms", () => {
    // RMS −22 dBFS is 8 dB over −30 at ratio 4: 6 dB of reduction.
    const signal = new Float64Array(5 * FS);
    signal.set(sine(3 * FS, 1000, FS, -19));
    const gr = grTrace(new Compressor(FS, 1, auto, 1024), signal);
    expect(gr[3 * FS - 1]).toBeGreaterThan(5.8);
    expect(gr[3 * FS - 1]).toBeLessThan(6.2);
    expect(recoveryMs(gr, 3 * FS)).toBeGreaterThan(500);
  });
});

describe("auto release on bus compression (our design target: no pumping)", () => {
  it("about 4 dB of reduction on a beat with a 30 ms attack: the gain swings far less than with a fixed 40 ms release", () => {
    // 1 kHz carrier, level dipping 12 dB between hits twice a second.
    const n = 8 * FS;
    const x = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const beatPhase = ((i / FS) * 2) % 1;
      x[i] = 10 ** (-10 / 20) * Math.sin((2 * Math.PI * 1000 * i) / FS) * (beatPhase < 0.15 ? 1 : 0.25);
    }
    const swing = (releaseMs: number | "auto", thresholdDb: number): { mean: number; range: number } => {
      const comp = new Compressor(FS, 1, settings({ thresholdDb, ratio: 3, kneeDb: 6, attackMs: 30, rmsWindowMs: 20, releaseMs }), 1024);
      const tail = grTrace(comp, x).subarray(4 * FS);
      let lo = Infinity, hi = -Infinity, sum = 0;
      for (const v of tail) {
        lo = Math.min(lo, v);
        hi = Math.max(hi, v);
        sum += v;
      }
      return { mean: sum / tail.length, range: hi - lo };
    };
    // Each mode gets the threshold that gives a mean reduction of 4 dB (bisection).
    const at4Db = (releaseMs: number | "auto"): { mean: number; range: number } => {
      let lo = -60, hi = 0;
      for (let k = 0; k < 14; k++) {
        const mid = (lo + hi) / 2;
        if (swing(releaseMs, mid).mean > 4) lo = mid;
        else hi = mid;
      }
      return swing(releaseMs, (lo + hi) / 2);
    };
    const auto = at4Db("auto");
    const fixed = at4Db(40);
    expect(Math.abs(auto.mean - 4)).toBeLessThan(0.05);
    expect(Math.abs(fixed.mean - 4)).toBeLessThan(0.05);
    expect(auto.range).toBeLessThan(fixed.range / 2);
  });
});

describe("the compressor's per-frame block path (reference: RmsDetector → gainReductionDb → GainSmoother, composed here frame by frame)", () => {
  // Noise whose level steps between −40 and −5 dBFS, so the path crosses the knee, attacks and releases.
  function steppedNoise(frames: number, seed: number, scale: number): Float64Array {
    const x = whiteNoise(frames, seed);
    for (let i = 0; i < frames; i++) x[i] *= scale * 10 ** (-(((i / 4800) | 0) % 8) * 5 / 20) * 0.56;
    return x;
  }

  it.each([
    ["fixed release, hard knee", { releaseMs: 80, kneeDb: 0 }],
    ["auto release, 6 dB knee", { releaseMs: "auto" as const, kneeDb: 6 }],
  ])("stereo and mono, %s: reduction within 1e-12 dB, gain within 1e-12 (relative) of the composed reference", (_name, over) => {
    // A 5 ms attack keeps the per-frame path (the control-rate path needs 10 ms).
    const s = settings({ thresholdDb: -24, ratio: 3, attackMs: 5, makeupDb: 2, rmsWindowMs: 20, ...over });
    expect(controlFramesFor(s, FS)).toBe(1);
    const frames = 48000;
    for (const channels of [1, 2]) {
      const input = [steppedNoise(frames, 31, 1), steppedNoise(frames, 32, 0.7)].slice(0, channels);
      // Reference, one frame at a time.
      const power = new Float64Array(frames);
      new RmsDetector(FS, channels, s.rmsWindowMs).process(input, frames, power);
      const smoother = new GainSmoother(FS, s.attackMs, s.releaseMs);
      const refGr = power.map((p) => smoother.next(gainReductionDb(10 * Math.log10(p), s.thresholdDb, s.ratio, s.kneeDb)));
      // The compressor in blocks of 480.
      const comp = new Compressor(FS, channels, s, 480);
      const gr = new Float64Array(frames);
      const out = input.map((x) => x.slice());
      const detectOnly = new Compressor(FS, channels, s, 480);
      for (let off = 0; off < frames; off += 480) {
        detectOnly.detect(input.map((x) => x.subarray(off, off + 480)), 480, gr.subarray(off, off + 480));
        comp.process(out.map((x) => x.subarray(off, off + 480)), 480);
      }
      let worstDb = 0, worstGain = 0;
      for (let i = 0; i < frames; i++) {
        worstDb = Math.max(worstDb, Math.abs(gr[i] - refGr[i]));
        const g = 10 ** ((s.makeupDb - refGr[i]) / 20);
        for (let c = 0; c < channels; c++) if (input[c][i] !== 0) worstGain = Math.max(worstGain, Math.abs(out[c][i] / input[c][i] / g - 1));
      }
      expect(Math.max(...refGr)).toBeGreaterThan(5);
      expect(worstDb).toBeLessThan(1e-12);
      expect(worstGain).toBeLessThan(1e-12);
    }
  });
});

describe("the compressor's control-rate path (reference: RmsDetector → gainReductionDb → GainSmoother composed at the control rate; the deviation bounds against the per-frame path are our design targets)", () => {
  function steppedNoise(frames: number, seed: number, scale: number): Float64Array {
    const x = whiteNoise(frames, seed);
    for (let i = 0; i < frames; i++) x[i] *= scale * 10 ** (-(((i / 4800) | 0) % 8) * 5 / 20) * 0.56;
    return x;
  }
  const base = settings({ thresholdDb: -24, ratio: 3, attackMs: 10, makeupDb: 2, rmsWindowMs: 20, kneeDb: 6 });

  it("is taken when every time constant is at least 10 ms, at about 12 kHz", () => {
    expect(CONTROL_MIN_TIME_MS).toBe(10);
    expect([44100, 48000, 88200, 96000, 192000].map(controlFrames)).toEqual([4, 4, 7, 8, 16]);
    expect(controlFramesFor(base, FS)).toBe(4);
    expect(controlFramesFor({ ...base, releaseMs: "auto" }, FS)).toBe(4);
    expect(controlFramesFor({ ...base, attackMs: 9.9 }, FS)).toBe(1);
    expect(controlFramesFor({ ...base, releaseMs: 5 }, FS)).toBe(1);
  });

  it.each([
    ["fixed release", { releaseMs: 80 }],
    ["auto release", { releaseMs: "auto" as const }],
  ])("%s: equals the reference composed at the control rate (the curve and smoother on every 4th frame's power, the gain interpolated one group later), for any block size", (_name, over) => {
    const s = { ...base, ...over };
    const k = controlFrames(FS);
    const frames = 24000;
    const input = [steppedNoise(frames, 41, 1), steppedNoise(frames, 42, 0.7)];
    const power = new Float64Array(frames);
    new RmsDetector(FS, 2, s.rmsWindowMs).process(input, frames, power);
    const smoother = new GainSmoother(FS / k, s.attackMs, s.releaseMs);
    const control: number[] = [];
    for (let n = k - 1; n < frames; n += k) control.push(10 ** ((s.makeupDb - smoother.next(gainReductionDb(10 * Math.log10(power[n]), s.thresholdDb, s.ratio, s.kneeDb))) / 20));
    const makeup = 10 ** (s.makeupDb / 20);
    // Group m (frames mk … mk+k−1) goes from control value m − 2 to m − 1.
    const ref = new Float64Array(frames);
    for (let i = 0; i < frames; i++) {
      const m = Math.floor(i / k), p = (i % k) + 1;
      const from = m >= 2 ? control[m - 2] : makeup, to = m >= 1 ? control[m - 1] : makeup;
      ref[i] = from + (to - from) * (p / k);
    }
    for (const block of [480, 333, 1]) {
      const comp = new Compressor(FS, 2, s, 480);
      const gain = new Float64Array(frames);
      for (let off = 0; off < frames; off += block) {
        const n = Math.min(block, frames - off);
        comp.gain(input.map((x) => x.subarray(off, off + n)), n, gain.subarray(off, off + n));
      }
      let worst = 0;
      for (let i = 0; i < frames; i++) worst = Math.max(worst, Math.abs(gain[i] / ref[i] - 1));
      expect(worst).toBeLessThan(1e-12);
      // process() applies the same gain to both channels (its stereo loop interpolates on the way).
      const audio = input.map((x) => x.slice());
      const applied = new Compressor(FS, 2, s, 480);
      for (let off = 0; off < frames; off += block) {
        const n = Math.min(block, frames - off);
        applied.process(audio.map((x) => x.subarray(off, off + n)), n);
      }
      for (let c = 0; c < 2; c++) for (let i = 0; i < frames; i++) expect(audio[c][i]).toBe(input[c][i] * gain[i]);
    }
    expect(Math.min(...control)).toBeLessThan(makeup * 10 ** (-5 / 20));
  });

  it("follows the per-frame path within 0.05 dB on noise stepping 35 dB up and down (10 ms attack), and within 0.02 dB once the per-frame path is delayed by one control group (measured: 0.022 and 0.014 dB)", () => {
    const frames = 48000;
    const input = [steppedNoise(frames, 51, 1)];
    const grOf = (s: CompressorSettings): Float64Array => {
      const gr = new Float64Array(frames);
      const comp = new Compressor(FS, 1, s, 480);
      for (let off = 0; off < frames; off += 480) comp.detect([input[0].subarray(off, off + 480)], 480, gr.subarray(off, off + 480));
      return gr;
    };
    const control = grOf(base);
    // The per-frame path with the same settings, forced by composing it from its parts.
    const power = new Float64Array(frames);
    new RmsDetector(FS, 1, base.rmsWindowMs).process(input, frames, power);
    const smoother = new GainSmoother(FS, base.attackMs, base.releaseMs);
    const perFrame = power.map((p) => smoother.next(gainReductionDb(10 * Math.log10(p), base.thresholdDb, base.ratio, base.kneeDb)));
    let worst = 0, worstDelayed = 0;
    for (let i = 4; i < frames; i++) {
      worst = Math.max(worst, Math.abs(control[i] - perFrame[i]));
      worstDelayed = Math.max(worstDelayed, Math.abs(control[i] - perFrame[i - 4]));
    }
    expect(Math.max(...perFrame)).toBeGreaterThan(8);
    expect(worst).toBeLessThan(0.05);
    expect(worstDelayed).toBeLessThan(0.02);
    expect(worstDelayed).toBeLessThan(worst);
  });
});

describe("compressor audio path", () => {
  it("applies the linked gain and makeup to both channels", () => {
    const comp = new Compressor(FS, 2, settings({ thresholdDb: -60, ratio: 1, makeupDb: 6 }), 256);
    const l = sine(256, 440, FS, linearToDb(0.1));
    const r = sine(256, 440, FS, linearToDb(0.2));
    const l0 = l.slice(), r0 = r.slice();
    comp.process([l, r], 256);
    for (let i = 0; i < 256; i++) {
      expect(l[i]).toBeCloseTo(l0[i] * 10 ** (6 / 20), 12);
      expect(r[i]).toBeCloseTo(r0[i] * 10 ** (6 / 20), 12);
    }
  });

  it("sidechain high-pass keeps a 30 Hz tone from triggering reduction", () => {
    const plain = new Compressor(FS, 1, settings({ thresholdDb: -20 }), 1024);
    const filtered = new Compressor(FS, 1, settings({ thresholdDb: -20, sidechainHighPassHz: 200 }), 1024);
    const tone = sine(FS, 30, FS, linearToDb(0.5));
    const a = grTrace(plain, tone), b = grTrace(filtered, tone);
    // RMS −9 dBFS is 11 dB over −20 at ratio 4: about 8.25 dB of reduction.
    expect(a[FS - 1]).toBeGreaterThan(7);
    // 2nd-order high-pass at 200 Hz: 30 Hz is ~33 dB down, below the threshold.
    expect(Math.max(...b.subarray(FS / 2))).toBe(0);
  });
});

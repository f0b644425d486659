// The live chain's promises, each against buildChain (the renderer's own
// chain) or against the settings themselves:
//   - glides: a 12 dB EQ gain change and a 20 dB compressor threshold change
//     mid-stream on a 1 kHz sine make no sample-to-sample step larger than
//     twice the sine's own largest step (at its level after the change);
//   - Push, then release: the settings return bit for bit, and so does the
//     processing (same output as a chain never pushed, from the same state);
//   - stage bypass and band bypass/solo, set from the start or switched live,
//     give buildChain's output with the same flags, bit for bit (delayed by
//     the bypassed stages' latency, which the desk keeps so nothing jumps).
import { describe, expect, it } from "vitest";
import { buildChain } from "../chain/build-chain.ts";
import type { Chain, Stage } from "../chain/schema.ts";
import { FADE_FRAMES, GLIDE_MS, LiveChain } from "./live-chain.ts";
import { chainOf, EVERY_STAGE, musicLike } from "./live.test-util.ts";
import { PUSH_DESCRIPTIONS, pushStage } from "./push.ts";

const SR = 48000;
const BLOCK = 128;

/** Runs `chain` over `input` in 128-frame blocks, calling `at(frame)` before each block. */
function runLive(live: LiveChain, input: Float64Array[], at?: (frame: number) => void): Float64Array[] {
  const n = input[0].length, nch = input.length;
  const out = input.map((x) => x.slice());
  const view = Array.from({ length: nch }, () => new Float64Array(0));
  for (let pos = 0; pos < n; pos += BLOCK) {
    at?.(pos);
    const k = Math.min(BLOCK, n - pos);
    for (let c = 0; c < nch; c++) view[c] = out[c].subarray(pos, pos + k);
    live.process(view, k);
  }
  return out;
}

/** buildChain's output (no latency compensation) in 480-frame chunks. */
function runBuilt(chain: Chain, input: Float64Array[]): { out: Float64Array[]; latency: number } {
  const built = buildChain(chain, SR, input.length, 480);
  const out = input.map((x) => x.slice());
  for (let pos = 0; pos < out[0].length; pos += 480) {
    const k = Math.min(480, out[0].length - pos);
    const view = out.map((x) => x.subarray(pos, pos + k));
    for (const s of built.stages) s.processor.process(view, k);
  }
  return { out, latency: built.latencyFrames };
}

function sine(freqHz: number, peak: number, seconds: number): Float64Array[] {
  const n = Math.round(seconds * SR);
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = peak * Math.sin((2 * Math.PI * freqHz * i) / SR);
  return [x, x.slice()];
}

function largestStep(x: Float64Array, from: number, to: number): number {
  let m = 0;
  for (let i = Math.max(1, from); i < to; i++) m = Math.max(m, Math.abs(x[i] - x[i - 1]));
  return m;
}

function music(seconds: number): Float64Array[] {
  return musicLike(seconds, SR).map((a) => Float64Array.from(a));
}

const numbers = (v: unknown): number[] => flatten(v);
function flatten(v: unknown, out: number[] = []): number[] {
  if (typeof v === "number") out.push(v);
  else if (Array.isArray(v)) v.forEach((x) => flatten(x, out));
  else if (v && typeof v === "object") Object.values(v).forEach((x) => flatten(x, out));
  return out;
}

describe("LiveChain glides (no clicks)", () => {
  const change = BLOCK * 113;
  const glideEnd = change + Math.round((GLIDE_MS / 1000) * SR) + BLOCK;

  for (const shape of ["peak", "highShelf"] as const) {
    it(`an EQ gain change of 12 dB (${shape} at 1 kHz) glides: no step larger than twice the sine's own largest step`, () => {
      const eq = (gainDb: number): Chain => chainOf({ stages: [{ type: "eq", bands: [{ shape, freqHz: 1000, gainDb, q: 1 }] }] });
      const input = sine(1000, 0.1, 0.6);
      const ratio = (glideMs: number) => {
        const live = new LiveChain(eq(0), SR, 2, BLOCK, glideMs);
        const out = runLive(live, input, (f) => f === change && live.setChain(eq(12)))[0];
        // The sine's own largest step at its level after the change (steady state).
        const own = largestStep(out, glideEnd + SR * 0.1, out.length);
        expect(own).toBeGreaterThan(1.8 * largestStep(input[0], 0, SR * 0.1)); // the gain really rose (+6 dB at a shelf's midpoint)
        return largestStep(out, change - BLOCK, glideEnd + BLOCK) / own;
      };
      const glided = ratio(GLIDE_MS), instant = ratio(0);
      console.log(`EQ +12 dB (${shape}): largest step / sine's own = ${glided.toFixed(3)} glided, ${instant.toFixed(3)} in one step`);
      expect(glided).toBeLessThanOrEqual(2);
      if (shape === "highShelf") expect(instant).toBeGreaterThan(2); // the check catches a click
    });
  }

  it("a compressor threshold change of 20 dB steps no more than twice the sine's own largest step", () => {
    const comp = (thresholdDb: number): Chain =>
      chainOf({ stages: [{ type: "compress", thresholdDb, ratio: 4, kneeDb: 0, attackMs: 5, releaseMs: 50, makeupDb: 0, rmsWindowMs: 5 }] });
    const input = sine(1000, 0.5, 0.8);
    const live = new LiveChain(comp(-6), SR, 2);
    const out = runLive(live, input, (f) => f === change && live.setChain(comp(-26)))[0];
    const before = largestStep(out, change - SR * 0.1, change);
    const after = largestStep(out, out.length - SR * 0.1, out.length);
    expect(after).toBeLessThan(0.5 * before); // the 20 dB lower threshold compresses
    // (The compressor's own attack and release also smooth a threshold step; the glide adds to them.)
    const own = Math.max(before, after);
    const worst = largestStep(out, change - BLOCK, out.length);
    console.log(`compressor threshold −20 dB: largest step ${worst.toExponential(3)} vs sine's own ${own.toExponential(3)}`);
    expect(worst).toBeLessThanOrEqual(2 * own);
  });

  it("a change is heard within 50 ms: the first glide step lands in the next 16 frames", () => {
    const trim = (gainDb: number): Chain => chainOf({ stages: [{ type: "trim", gainDb }] });
    const input = [new Float64Array(SR * 0.2).fill(0.1), new Float64Array(SR * 0.2).fill(0.1)];
    const live = new LiveChain(trim(0), SR, 2);
    const out = runLive(live, input, (f) => f === 4096 && live.setChain(trim(-12)))[0];
    expect(out[4096 + 16]).toBeLessThan(0.1);
    expect(out[4096 + Math.round(0.05 * SR)]).toBe(0.1 * 10 ** (-12 / 20));
  });
});

describe("Push", () => {
  it("pushes each stage type as documented and restores the settings and the processing bit for bit", () => {
    const chain = chainOf(EVERY_STAGE);
    const live = new LiveChain(chain, SR, 2);
    const reference = new LiveChain(chain, SR, 2);
    const before = chain.stages.map((_, i) => live.appliedSettings(i));
    const input = music(1.2);
    runLive(live, input, (f) => {
      if (f === 0) chain.stages.forEach((_, i) => live.setPush(i, true));
      if (f === 128 * 150) {
        // Pushed and settled: each stage holds its pushed settings.
        chain.stages.forEach((s, i) => expect(live.appliedSettings(i)).toEqual(pushStage(s)));
        chain.stages.forEach((_, i) => live.setPush(i, false));
      }
    });
    expect(live.gliding).toBe(false);
    const after = chain.stages.map((_, i) => live.appliedSettings(i));
    const b = numbers(before), a = numbers(after);
    expect(a.length).toBe(b.length);
    a.forEach((v, i) => expect(Object.is(v, b[i])).toBe(true));
    expect(after).toEqual(before);
    // The processors hold the same numbers again: from the same (reset) state, the same output.
    live.reset();
    reference.reset();
    const x = music(0.5);
    const y1 = runLive(live, x), y2 = runLive(reference, x);
    for (let c = 0; c < 2; c++) expect(Buffer.compare(Buffer.from(y1[c].buffer), Buffer.from(y2[c].buffer))).toBe(0);
    for (const t of ["trim", "eq", "saturate", "compress", "multiband", "limit"] as const) expect(PUSH_DESCRIPTIONS[t].length).toBeGreaterThan(10);
  });
});

describe("Bypass and solo equal buildChain with the same flags, bit for bit", () => {
  const expectDelayedEqual = (live: Float64Array[], built: Float64Array[], delay: number, from = 0) => {
    for (let c = 0; c < live.length; c++) {
      const a = live[c].subarray(from + delay), b = built[c].subarray(from, built[c].length - delay);
      let same = true;
      for (let i = 0; i < b.length && same; i++) same = Object.is(a[i], b[i]);
      expect(same).toBe(true);
    }
  };

  it("flags set in the chain: a bypassed stage, a bypassed and a soloed band", () => {
    const flagged = chainOf(EVERY_STAGE);
    flagged.stages[3].bypass = true; // compressor
    const mb = flagged.stages[4] as Extract<Stage, { type: "multiband" }>;
    mb.bands[1].bypass = true;
    mb.bands[2].solo = true;
    mb.bands[3].solo = true;
    const input = music(1);
    const live = runLive(new LiveChain(flagged, SR, 2), input);
    const built = runBuilt(flagged, input);
    expectDelayedEqual(live, built.out, 0);
  });

  it("a bypassed latency-bearing stage keeps its latency as a delay (no jump); downstream control-rate compressors then differ by < -90 dBFS", () => {
    // The saturator's 6 frames (4×) are kept as a delay in its place, so the
    // compressors after it see the audio 6 frames later than in buildChain's
    // chain without it: their control points (every 4th frame from the
    // stream start) fall elsewhere in the signal. Stages without a control
    // grid after it are exact (the limiter case below).
    const flagged = chainOf(EVERY_STAGE);
    flagged.stages[2].bypass = true;
    const input = music(1);
    const liveChain = new LiveChain(flagged, SR, 2);
    const live = runLive(liveChain, input);
    const built = runBuilt(flagged, input);
    const delay = liveChain.latencyFrames - built.latency;
    expect(delay).toBe(buildChain(chainOf({ stages: [EVERY_STAGE.stages[2]] }), SR, 2, 480).latencyFrames);
    let largest = 0;
    for (let c = 0; c < 2; c++) for (let i = 0; i + delay < input[0].length; i++) largest = Math.max(largest, Math.abs(live[c][i + delay] - built.out[c][i]));
    console.log(`bypassed saturator before control-rate compressors: largest difference ${(20 * Math.log10(largest)).toFixed(1)} dBFS`);
    expect(largest).toBeLessThan(10 ** (-90 / 20));
    // Without control-rate compressors after it: bit for bit.
    const tail = chainOf({ stages: [EVERY_STAGE.stages[1], { ...EVERY_STAGE.stages[2], bypass: true } as never, EVERY_STAGE.stages[5]] });
    const t = new LiveChain(tail, SR, 2);
    const tb = runBuilt(tail, input);
    // Without control-rate compressors after it, only the limiter's exact re-sum of its ramp (at fixed
    // stream positions) lands elsewhere: differences at the float64 rounding.
    const tl = runLive(t, input), d = t.latencyFrames - tb.latency;
    let tailLargest = 0;
    for (let c = 0; c < 2; c++) for (let i = 0; i + d < input[0].length; i++) tailLargest = Math.max(tailLargest, Math.abs(tl[c][i + d] - tb.out[c][i]));
    console.log(`bypassed saturator before the limiter: largest difference ${tailLargest === 0 ? "0" : `2^${Math.log2(tailLargest).toFixed(1)}`}`);
    expect(tailLargest).toBeLessThan(2 ** -45);
  });

  it("switched live: a stage bypass (after its crossfade) and a band solo (at once)", () => {
    const limit = chainOf({ stages: [{ type: "limit", inputGainDb: 8, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 80, truePeak: true }] });
    const input = music(1);
    const chain = new LiveChain(limit, SR, 2);
    const switchAt = 128 * 100;
    const bypassed = structuredClone(limit) as Chain;
    bypassed.stages[0].bypass = true;
    const live = runLive(chain, input, (f) => f === switchAt && chain.setChain(bypassed));
    // Bypassed limiter: the input delayed by its latency.
    const L = chain.latencyFrames;
    for (let i = switchAt + FADE_FRAMES; i < input[0].length; i++) expect(live[0][i]).toBe(input[0][i - L]);

    const mbInput = chainOf({ stages: [EVERY_STAGE.stages[4]] });
    const soloed = structuredClone(mbInput) as Chain;
    (soloed.stages[0] as Extract<Stage, { type: "multiband" }>).bands[1].solo = true;
    const mbLive = new LiveChain(mbInput, SR, 2);
    const a = runLive(mbLive, input, (f) => f === switchAt && mbLive.setChain(soloed));
    const b = runBuilt(soloed, input).out;
    expectDelayedEqual(a, b, 0, switchAt);
  });
});

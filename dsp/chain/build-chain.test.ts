import { describe, expect, it } from "vitest";
import { Prng } from "../output/prng.ts";
import { buildChain } from "./build-chain.ts";
import { parseChain } from "./schema.ts";
import { roundTripLatency } from "../saturate/oversampler.ts";

const FS = 48000;

const input = {
  stages: [
    { type: "trim", gainDb: 2 },
    { type: "eq", bands: [{ shape: "peak", freqHz: 2000, gainDb: 3, q: 1 }, { shape: "lowShelf", freqHz: 150, gainDb: -2, q: 0.7, channel: "side" }, { shape: "highPass", freqHz: 30, gainDb: 0, q: 0.707, channel: "mid" }] },
    { type: "saturate", driveDb: 9, blend: 0.6, oversample: 4 },
    { type: "compress", thresholdDb: -24, ratio: 3, kneeDb: 6, attackMs: 5, releaseMs: "auto", makeupDb: 2, rmsWindowMs: 10, sidechainHighPassHz: 100 },
    { type: "multiband", crossoversHz: [200, 2000], bands: [0, 1, 2].map((b) => ({ thresholdDb: -30, ratio: 2, kneeDb: 6, attackMs: 10, releaseMs: b === 1 ? "auto" : 100, makeupDb: 0, rmsWindowMs: 10 })) },
    { type: "limit", inputGainDb: 6, ceilingDbtp: -1, lookaheadMs: 2, releaseMs: 50, truePeak: true },
  ],
};

function render(blocks: number[]): Float64Array[] {
  const parsed = parseChain(input);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  const built = buildChain(parsed.chain, FS, 2, 1024);
  const rnd = new Prng(77);
  const n = 20000;
  const x = [new Float64Array(n), new Float64Array(n)];
  for (let i = 0; i < n; i++) {
    const s = 0.4 * Math.sin((2 * Math.PI * 440 * i) / FS) * (i > 8000 ? 1 : 0.1);
    x[0][i] = s + 0.05 * (rnd.next() - 0.5);
    x[1][i] = 0.7 * s + 0.05 * (rnd.next() - 0.5);
  }
  let off = 0, k = 0;
  while (off < n) {
    const len = Math.min(blocks[k++ % blocks.length], n - off);
    const views = x.map((c) => c.subarray(off, off + len));
    for (const s of built.stages) s.processor.process(views, len);
    off += len;
  }
  return x;
}

describe("chain processors", () => {
  it("give identical output whatever the block sizes (state carries over exactly)", () => {
    const a = render([1024]);
    const b = render([1, 480, 17, 1000, 333, 64]);
    expect(Array.from(b[0])).toEqual(Array.from(a[0]));
    expect(Array.from(b[1])).toEqual(Array.from(a[1]));
    // And the chain really did something.
    expect(a[0].some((v, i) => Math.abs(v) > 0.1 && i > 9000)).toBe(true);
  });

  it("report latency as the sum of the stages' (oversampler round trip + limiter lookahead 96 + true-peak detector)", () => {
    const parsed = parseChain(input);
    if (!parsed.ok) throw new Error("bad chain");
    const built = buildChain(parsed.chain, FS, 2, 1024);
    const sum = built.stages.reduce((acc, s) => acc + s.processor.latencyFrames, 0);
    expect(built.latencyFrames).toBe(sum);
    expect(built.stages.find((s) => s.type === "saturate")!.processor.latencyFrames).toBe(roundTripLatency(4));
    expect(built.stages.find((s) => s.type === "limit")!.processor.latencyFrames).toBeGreaterThan(96);
  });

  it("rejects frequencies at or above half the sample rate", () => {
    const parsed = parseChain({ stages: [{ type: "eq", bands: [{ shape: "peak", freqHz: 23000, gainDb: 1, q: 1 }] }] });
    if (!parsed.ok) throw new Error("bad chain");
    expect(() => buildChain(parsed.chain, 44100, 2, 1024)).toThrow(/at or above half the sample rate/);
  });
});

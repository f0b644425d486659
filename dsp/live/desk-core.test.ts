// The desk's audio thread in Node: the same DeskCore the worklet runs.
// References: the renderer's own processing of the same stretch
// (renderStretch: buildChain in 10 ms chunks, latency compensated as
// render-file does), compared sample by sample after float32 rounding.
import { describe, expect, it } from "vitest";
import { buildChain } from "../chain/build-chain.ts";
import type { Chain } from "../chain/schema.ts";
import { PREROLL_S, prerollStartFrame } from "../render/preroll.ts";
import { DeskCore } from "./desk-core.ts";
import { chainOf, EVERY_STAGE, musicLike, renderStretch } from "./live.test-util.ts";

const SR = Number(process.env.DESK_TEST_SR ?? 48000);

function runDesk(chain: Chain, audio: Float32Array[], regionStart: number, regionEnd: number, frames: number, setup?: (core: DeskCore) => void): Float32Array[] {
  const audioStart = prerollStartFrame(regionStart, SR);
  const core = new DeskCore({
    sampleRate: SR,
    channels: 2,
    audio: audio.map((a) => a.subarray(audioStart, regionEnd)),
    audioStartFrame: audioStart,
    regionStartFrame: regionStart,
    regionEndFrame: regionEnd,
    chain,
  });
  core.setMatch(false);
  setup?.(core);
  core.warm();
  core.setPlaying(true);
  const out = [new Float32Array(frames), new Float32Array(frames)];
  const block = [new Float32Array(128), new Float32Array(128)];
  for (let pos = 0; pos < frames; pos += 128) {
    const n = Math.min(128, frames - pos);
    core.process(block, n);
    out[0].set(block[0].subarray(0, n), pos);
    out[1].set(block[1].subarray(0, n), pos);
  }
  return out;
}

function maxDiff(a: ArrayLike<number>, b: ArrayLike<number>, n = a.length): number {
  let m = 0;
  for (let i = 0; i < n; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

describe("DeskCore (the worklet's processing, in Node)", () => {
  const seconds = PREROLL_S + 3;
  const audio = musicLike(seconds, SR);
  const regionStart = Math.round(PREROLL_S * SR) + 1000;
  const regionEnd = regionStart + SR; // 1 s
  const chain = chainOf(EVERY_STAGE);

  it("equals the renderer over the region, started from the pre-roll, to the float32 rounding (≤ 2^-23 FS)", () => {
    const desk = runDesk(chain, audio, regionStart, regionEnd, regionEnd - regionStart);
    const from = prerollStartFrame(regionStart, SR);
    const ref = renderStretch(chain, audio, SR, from, regionEnd);
    const off = regionStart - from;
    for (let c = 0; c < 2; c++) {
      const r = Float32Array.from(ref[c].subarray(off));
      expect(maxDiff(desk[c], r)).toBeLessThanOrEqual(2 ** -23);
    }
    expect(buildChain(chain, SR, 2, 480).latencyFrames).toBeGreaterThan(0);
  });
});

describe("DeskCore around the chain: clamp, Bypass all, Match, meters", () => {
  const n = 4 * SR;
  const tone = (dbfs: number): Float32Array[] => {
    const a = new Float32Array(n);
    for (let i = 0; i < n; i++) a[i] = 10 ** (dbfs / 20) * Math.sin((2 * Math.PI * 1000 * i) / SR);
    return [a, a.slice()];
  };
  const make = (chain: Chain, audio: Float32Array[]) =>
    new DeskCore({ sampleRate: SR, channels: 2, audio, audioStartFrame: 0, regionStartFrame: 0, regionEndFrame: n, chain });
  const play = (core: DeskCore, seconds: number, each?: (out: Float32Array[]) => void) => {
    const out = [new Float32Array(128), new Float32Array(128)];
    for (let f = 0; f < seconds * SR; f += 128) {
      core.process(out, 128);
      each?.(out);
    }
  };

  it("the safety clamp holds the output at or under 0 dBFS whatever the chain does (and it has no switch)", () => {
    const core = make(chainOf({ stages: [{ type: "trim", gainDb: 24 }] }), tone(-6));
    core.setMatch(false);
    core.warm();
    core.setPlaying(true);
    let peak = 0;
    play(core, 1, (o) => o.forEach((c) => c.forEach((v) => (peak = Math.max(peak, Math.abs(v))))));
    expect(peak).toBe(1);
    expect("setClamp" in core).toBe(false);
  });

  it("meters a −23 dBFS 1 kHz stereo sine at −23 LUFS momentary and short-term (EBU Tech 3341, case 1: ±0.1 LU)", async () => {
    const { M } = await import("./meter-layout.ts");
    const core = make(chainOf({ stages: [] }), tone(-23));
    core.setMatch(false);
    core.warm();
    core.setPlaying(true);
    play(core, 3.5);
    expect(Math.abs(core.meters[M.momentaryLufs] + 23)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(core.meters[M.shortTermLufs] + 23)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(core.meters[M.integratedLufs] + 23)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(core.meters[M.truePeakDbtp] + 23)).toBeLessThanOrEqual(0.1);
    expect(core.meters[M.correlation]).toBeCloseTo(1, 6);
    expect(core.meters[M.seq] % 2).toBe(0);
  });

  it("Match brings a chain 6 dB louder back to the input's loudness over seconds; Bypass all is the input, delayed by the latency", async () => {
    const { M } = await import("./meter-layout.ts");
    const audio = tone(-23);
    const core = make(chainOf({ stages: [{ type: "trim", gainDb: 6 }, { type: "limit", inputGainDb: 0, ceilingDbtp: -1, lookaheadMs: 2, releaseMs: 50, truePeak: true }] }), audio);
    core.warm();
    core.setPlaying(true);
    play(core, 3.5);
    expect(core.meters[M.matchOffsetDb]).toBeCloseTo(-6, 1);
    let peak = 0;
    play(core, 0.1, (o) => o[0].forEach((v) => (peak = Math.max(peak, Math.abs(v)))));
    expect(20 * Math.log10(peak)).toBeCloseTo(-23, 1);
    // Match off: the real level (+6 dB).
    core.setMatch(false);
    peak = 0;
    play(core, 0.1, (o) => o[0].forEach((v) => (peak = Math.max(peak, Math.abs(v)))));
    expect(20 * Math.log10(peak)).toBeCloseTo(-17, 1);
    // Bypass all: after the crossfade, the input sample for sample, delayed by the chain's latency.
    core.setBypassAll(true);
    play(core, 0.01);
    const out = [new Float32Array(128), new Float32Array(128)];
    const heardAt = Math.round(core.positionS * SR);
    core.process(out, 128);
    for (let i = 0; i < 128; i++) expect(out[0][i]).toBe(audio[0][heardAt + i]);
  });
});

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

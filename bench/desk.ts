// Listening desk benchmark (the worklet, in Debian's chromium):
//   1. DSP speed: the bench chain (bench/chain.ts) on a 30 s region of a
//      48 kHz stereo 24-bit file, rendered by the desk's worklet in an
//      OfflineAudioContext (as fast as it goes), three runs; × real time =
//      region length / wall time of startRendering. The same DeskCore in
//      Node beside it, for comparison.
//   2. Real time: a 60 s play through DeskEngine (AudioContext, meters by
//      message) in headless chromium; the worklet's dropped and late block
//      counts (app/desk/engine/desk-worklet.ts).
// Figures only, no pass/fail. Run: npm run bench -- desk
// (DESK_BENCH_PLAY_S=N for a shorter play.)

import { buildChain } from "../dsp/chain/build-chain.ts";
import { createWavWriter } from "../dsp/io/wav-writer.ts";
import { DeskCore } from "../dsp/live/desk-core.ts";
import { musicLike } from "../dsp/live/live.test-util.ts";
import { PREROLL_S } from "../dsp/render/preroll.ts";
import { haveChromium, openDeskHarness } from "../tests/unit/desk-browser-harness.ts";
import { BENCH_CHAIN, chainOf } from "./chain.ts";
import { join } from "node:path";
import { loadavg } from "node:os";

const SR = 48000;
const REGION_S = 30;

export async function run(): Promise<void> {
  if (!haveChromium) {
    console.log("desk: no chromium at /usr/bin/chromium (CHROMIUM_PATH); skipped");
    return;
  }
  const chain = chainOf(BENCH_CHAIN);
  const seconds = PREROLL_S + REGION_S + 1;
  const audio = musicLike(seconds, SR);
  const harness = await openDeskHarness({});
  try {
    const path = join(harness.dir, "mix.wav");
    const w = await createWavWriter(path, { sampleRate: SR, channels: 2, bitDepth: 24, float: false });
    await w.write(audio.map((a) => Float64Array.from(a)), audio[0].length);
    await w.close();
    const region = { startS: PREROLL_S, endS: PREROLL_S + REGION_S };
    const frames = REGION_S * SR;
    console.log(`load average ${loadavg().map((l) => l.toFixed(2)).join(" ")} (shared machine: figures are noisy)`);
    const browserX: number[] = [], nodeX: number[] = [], chainX: number[] = [];
    for (let i = 0; i < 3; i++) {
      // Alternated: the worklet in chromium, then the same DeskCore in Node.
      const r = await harness.offline("/mix.wav", region, chain, frames);
      browserX.push(REGION_S / (r.renderMs / 1000));
      const core = new DeskCore({ sampleRate: SR, channels: 2, audio, audioStartFrame: 0, regionStartFrame: PREROLL_S * SR, regionEndFrame: (PREROLL_S + REGION_S) * SR, chain });
      core.setMatch(false);
      core.warm();
      core.setPlaying(true);
      const out = [new Float32Array(128), new Float32Array(128)];
      const t0 = performance.now();
      for (let f = 0; f < frames; f += 128) core.process(out, 128);
      nodeX.push(REGION_S / ((performance.now() - t0) / 1000));
      // The chain alone (buildChain, 128-frame blocks), for the desk's own overhead.
      const built = buildChain(chain, SR, 2, 128);
      const buf = [new Float64Array(128), new Float64Array(128)];
      const base = PREROLL_S * SR;
      const t1 = performance.now();
      for (let f = 0; f < frames; f += 128) {
        for (let c = 0; c < 2; c++) for (let i = 0; i < 128; i++) buf[c][i] = audio[c][base + f + i];
        for (const s of built.stages) s.processor.process(buf, 128);
      }
      chainX.push(REGION_S / ((performance.now() - t1) / 1000));
    }
    const med = (x: number[]) => [...x].sort((a, b) => a - b)[Math.floor(x.length / 2)];
    console.log(`desk worklet, bench chain, 48 kHz stereo, ${REGION_S} s region (OfflineAudioContext): ${browserX.map((x) => x.toFixed(1)).join(", ")} × real time (median ${med(browserX).toFixed(1)}×; target ≥ 20×)`);
    console.log(`same DeskCore in Node (meters, Match, clamp included):                 ${nodeX.map((x) => x.toFixed(1)).join(", ")} × real time (median ${med(nodeX).toFixed(1)}×)`);
    console.log(`the chain alone (buildChain) in Node:                                    ${chainX.map((x) => x.toFixed(1)).join(", ")} × real time (median ${med(chainX).toFixed(1)}×)`);
    const playS = Number(process.env.DESK_BENCH_PLAY_S ?? 60);
    if (!(playS > 0)) return;
    const live = await harness.live("/mix.wav", region, chain, playS);
    console.log(`real-time play in headless chromium, ${playS} s at ${live.sampleRate} Hz: ${live.droppedBlocks} dropped blocks, ${live.lateBlocks} late blocks (target 0), ${live.meters} meter snapshots (${(live.meters / playS).toFixed(1)}/s), last momentary ${live.momentaryLufs.toFixed(1)} LUFS`);
  } finally {
    await harness.close();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) await run();

// Parity of the listening desk with the print, in Chromium: the worklet
// (app/desk/engine/desk-worklet.ts, bundled by Vite) runs in an
// OfflineAudioContext over a region of a 24-bit WAV, fetched and decoded by
// the desk's own loader with its pre-roll; renderFile renders the same
// stretch with the same chain to 32-bit float without dither (the print
// before dither and word length). Sample by sample, the largest difference
// must be within float32 rounding, 2^-23 of full scale. The chain has every
// stage type, including the latency-bearing ones (limiter lookahead with
// true-peak detection, saturation oversampled 4×).
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openWav } from "../../dsp/io/wav-reader.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { chainOf, EVERY_STAGE, musicLike } from "../../dsp/live/live.test-util.ts";
import { PREROLL_S, prerollStartFrame } from "../../dsp/render/preroll.ts";
import { renderFile } from "../../dsp/render/render-file.ts";
import { buildChain } from "../../dsp/chain/build-chain.ts";
import { haveChromium, openDeskHarness, type DeskHarness } from "./desk-browser-harness.ts";

const RATES = [44100, 48000, 96000];
const REGION_S = { start: PREROLL_S + 0.5, end: PREROLL_S + 2.5 };
const SECONDS = PREROLL_S + 3;

async function wav24(path: string, audio: Float32Array[], sampleRate: number): Promise<void> {
  const w = await createWavWriter(path, { sampleRate, channels: 2, bitDepth: 24, float: false });
  const planar = audio.map((a) => Float64Array.from(a));
  await w.write(planar, planar[0].length);
  await w.close();
}

async function readAll(path: string): Promise<Float64Array[]> {
  const r = await openWav(path);
  const out = [new Float64Array(r.format.frames), new Float64Array(r.format.frames)];
  let pos = 0;
  const buf = [new Float64Array(65536), new Float64Array(65536)];
  for (;;) {
    const n = await r.read(buf, 65536);
    if (!n) break;
    out[0].set(buf[0].subarray(0, n), pos);
    out[1].set(buf[1].subarray(0, n), pos);
    pos += n;
  }
  await r.close();
  return out;
}

let harness: DeskHarness | undefined;

describe.skipIf(!haveChromium)("listening desk worklet in chromium", () => {
  beforeAll(async () => {
    harness = await openDeskHarness({});
    for (const sr of RATES) await wav24(join(harness.dir, `mix-${sr}.wav`), musicLike(SECONDS, sr), sr);
  }, 180_000);

  afterAll(async () => {
    await harness?.close();
  });

  for (const sr of RATES) {
    it(`equals renderFile over the region at ${sr} Hz (largest difference ≤ 2^-23 FS)`, async () => {
      const chain = chainOf(EVERY_STAGE);
      const start = Math.round(REGION_S.start * sr), end = Math.round(REGION_S.end * sr);
      const frames = end - start;
      const got = await harness!.offline(`/mix-${sr}.wav`, { startS: start / sr, endS: end / sr }, chain, frames);
      expect(got.sampleRate).toBe(sr);
      // The print of the same stretch: processing from the pre-roll frame (the rule both sides share), region kept.
      const from = prerollStartFrame(start, sr);
      const out = join(harness!.dir, `print-${sr}.wav`);
      await renderFile(join(harness!.dir, `mix-${sr}.wav`), out, chain, { region: { startS: from / sr, endS: end / sr } });
      const print = await readAll(out);
      // The last L frames (L = the chain's latency, its lookahead) are left out: a print reads the music
      // after the region into its lookahead, the desk's loop has only the region (it wraps to its start).
      const latency = buildChain(chain, sr, 2, 480).latencyFrames;
      let largest = 0;
      let worstFrame = -1;
      for (let c = 0; c < 2; c++) {
        for (let i = 0; i < frames - latency; i++) {
          const d = Math.abs(got.channels[c][i] - print[c][start - from + i]);
          if (d > largest) {
            largest = d;
            worstFrame = i;
          }
        }
      }
      if (largest > 2 ** -23) console.log(`desk parity at ${sr} Hz: worst frame ${worstFrame} of ${frames}`);
      console.log(`desk parity at ${sr} Hz: largest difference ${largest === 0 ? "0" : `2^${Math.log2(largest).toFixed(2)}`} FS over ${frames} frames × 2 (latency ${buildChain(chain, sr, 2, 480).latencyFrames} frames)`);
      expect(largest).toBeLessThanOrEqual(2 ** -23);
      // Not silence: the comparison means something.
      expect(Math.max(...got.channels[0].subarray(0, 4800).map(Math.abs))).toBeGreaterThan(0.1);
    }, 120_000);
  }
});

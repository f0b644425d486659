// Helpers for the render tests: synthesized mixes written with our WAV writer.
import { mkdtempSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { createWavWriter } from "../io/wav-writer.ts";
import { openWav } from "../io/wav-reader.ts";
import { Prng } from "../output/prng.ts";

export const tempDir = (): string => mkdtempSync(join(tmpdir(), "tidemark-render-"));

export async function writeWav(path: string, channels: Float64Array[], sampleRate: number, bitDepth: 16 | 24 | 32, float: boolean): Promise<void> {
  const w = await createWavWriter(path, { sampleRate, channels: channels.length, bitDepth, float });
  const block = 4096;
  for (let off = 0; off < channels[0].length; off += block) {
    const n = Math.min(block, channels[0].length - off);
    await w.write(channels.map((c) => c.subarray(off, off + n)), n);
  }
  await w.close();
}

export async function readWav(path: string): Promise<Float64Array[]> {
  const r = await openWav(path);
  const out = Array.from({ length: r.format.channels }, () => new Float64Array(r.format.frames));
  const bufs = Array.from({ length: r.format.channels }, () => new Float64Array(4096));
  let pos = 0;
  for (;;) {
    const n = await r.read(bufs, 4096);
    if (n === 0) break;
    for (let c = 0; c < out.length; c++) out[c].set(bufs[c].subarray(0, n), pos);
    pos += n;
  }
  await r.close();
  return out;
}

/** A synthetic "mix": a few tones with a beat, noise, level envelope; seeded. */
export function synthMix(seconds: number, sampleRate: number, seed: number, levelDb = -18): Float64Array[] {
  const n = Math.round(seconds * sampleRate);
  const rnd = new Prng(seed);
  const tones = [55 + rnd.next() * 40, 220 + rnd.next() * 200, 900 + rnd.next() * 900, 3000 + rnd.next() * 3000];
  const gain = 10 ** (levelDb / 20);
  const l = new Float64Array(n), r = new Float64Array(n);
  let lp = 0;
  for (let i = 0; i < n; i++) {
    const t = i / sampleRate;
    const beat = Math.exp(-((t * 2) % 1) * 8); // a hit every 0.5 s
    lp += 0.05 * (rnd.next() * 2 - 1 - lp);
    let v = 0;
    for (let k = 0; k < tones.length; k++) v += Math.sin(2 * Math.PI * tones[k] * t + k) / (k + 1);
    const s = gain * (0.6 * v * (0.5 + 0.5 * beat) + 2 * lp * beat);
    l[i] = s;
    r[i] = 0.8 * s + gain * 0.2 * Math.sin(2 * Math.PI * tones[1] * 1.01 * t);
  }
  return [l, r];
}

// Album loudness against the BS.1770-4 integrated loudness of the
// concatenated file (tracks and the gaps' silence written as one WAV): our
// meter over that file, and ebur128-wasm as a second opinion.
import { mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { mixedSignal, pinkNoise } from "../bench/signals.ts";
import { analyzeFile } from "./analysis.ts";
import { AlbumError, measureAlbum } from "./album.ts";
import { createWavWriter } from "./io/wav-writer.ts";
import { referenceIntegratedLufs } from "./loudness/ebur128-reference.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-album-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function write(name: string, channels: Float64Array[], sampleRate = 48000): Promise<string> {
  const path = join(dir, name);
  const w = await createWavWriter(path, { sampleRate, channels: channels.length, bitDepth: 32, float: true });
  await w.write(channels, channels[0].length);
  await w.close();
  return path;
}

const concat = (...parts: Float64Array[]) => {
  const out = new Float64Array(parts.reduce((n, p) => n + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
};
// Float32 as the file holds it, so both sides measure the same samples.
const f32 = (x: Float64Array) => Float64Array.from(Float32Array.from(x));

describe("album loudness = integrated loudness of the concatenation (BS.1770-4 gating across the album)", () => {
  const fs = 48000;
  it("two stereo tracks 12 dB apart with a 2.5 s gap: our meter over the joined file exactly, ebur128-wasm within 0.05 LU", async () => {
    const t1 = [f32(mixedSignal(20 * fs, fs, 1, -1)), f32(mixedSignal(20 * fs, fs, 2, -2))];
    const t2 = [f32(mixedSignal(14 * fs, fs, 3, -13)), f32(mixedSignal(14 * fs, fs, 4, -14))];
    const gap = new Float64Array(2.5 * fs);
    const p1 = await write("t1.wav", t1);
    const p2 = await write("t2.wav", t2);
    const joined = [concat(t1[0], gap, t2[0]), concat(t1[1], gap, t2[1])];
    const pj = await write("joined.wav", joined);

    const album = await measureAlbum([{ path: p1, gapBeforeS: 0 }, { path: p2, gapBeforeS: 2.5 }]);
    const whole = await analyzeFile(pj);
    expect(album.durationS).toBeCloseTo(36.5, 9);
    expect(album.integratedLufs).toBeCloseTo(whole.integratedLufs, 9);
    expect(album.loudnessRangeLu).toBeCloseTo(whole.loudnessRangeLu, 9);
    const reference = referenceIntegratedLufs(fs, joined.map((c) => Float32Array.from(c)));
    expect(Math.abs(album.integratedLufs - reference)).toBeLessThanOrEqual(0.05);
    // Not simply the mean of the two tracks' loudness: the quieter track's blocks fall under the relative gate.
    const [a1, a2] = [await analyzeFile(p1), await analyzeFile(p2)];
    expect(a1.integratedLufs - a2.integratedLufs).toBeGreaterThan(10);
    expect(album.integratedLufs).toBeGreaterThan((a1.integratedLufs + a2.integratedLufs) / 2 + 1);
  });

  it("a mono track in a stereo album plays on both channels", async () => {
    const mono = f32(pinkNoise(10 * fs, 5, 3));
    const st = [f32(mixedSignal(10 * fs, fs, 6, -6)), f32(mixedSignal(10 * fs, fs, 7, -6))];
    const pm = await write("mono.wav", [mono]);
    const ps = await write("stereo.wav", st);
    const album = await measureAlbum([{ path: ps, gapBeforeS: 0 }, { path: pm, gapBeforeS: 1 }]);
    const gap = new Float64Array(fs);
    const joined = [concat(st[0], gap, mono), concat(st[1], gap, mono)];
    expect(album.channels).toBe(2);
    expect(Math.abs(album.integratedLufs - referenceIntegratedLufs(fs, joined.map((c) => Float32Array.from(c))))).toBeLessThanOrEqual(0.05);
  });

  it("masters at different sample rates are refused with the rates named", async () => {
    const a = await write("r48.wav", [new Float64Array(fs)], 48000);
    const b = await write("r44.wav", [new Float64Array(44100)], 44100);
    await expect(measureAlbum([{ path: a, gapBeforeS: 0 }, { path: b, gapBeforeS: 2 }])).rejects.toThrow(AlbumError);
    await expect(measureAlbum([{ path: a, gapBeforeS: 0 }, { path: b, gapBeforeS: 2 }])).rejects.toThrow(/48000, 44100 Hz/);
  });
});

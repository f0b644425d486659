// sox as an outside reference for peaks between samples (tests only; never
// used by the product): the waveform is reconstructed at 8× with sox's
// very-high-quality resampler and its largest sample read by `sox stats`:
//   sox in.wav -e floating-point -b 32 out.wav rate -v <8×fs>
//   sox out.wav -n stats      → "Pk lev dB"
// sox's `rate -v` is linear-phase and flat to about 0.465·fs (−3 dB near
// 0.475·fs, −50 dB at 0.49·fs; measured). It works in 32-bit integers
// inside, so readings clip at 0 dBFS: keep test levels below.

import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

export const hasSox = spawnSync("sox", ["--version"]).status === 0;

/** 32-bit float WAV bytes (WAVE_FORMAT_IEEE_FLOAT) of planar channels. */
export function floatWav(sampleRate: number, channels: Float64Array[]): Buffer {
  const n = channels[0].length, nch = channels.length;
  const b = Buffer.alloc(58 + n * nch * 4);
  b.write("RIFF", 0);
  b.writeUInt32LE(50 + n * nch * 4, 4);
  b.write("WAVE", 8);
  b.write("fmt ", 12);
  b.writeUInt32LE(18, 16);
  b.writeUInt16LE(3, 20);
  b.writeUInt16LE(nch, 22);
  b.writeUInt32LE(sampleRate, 24);
  b.writeUInt32LE(sampleRate * nch * 4, 28);
  b.writeUInt16LE(nch * 4, 32);
  b.writeUInt16LE(32, 34);
  b.writeUInt16LE(0, 36);
  b.write("fact", 38);
  b.writeUInt32LE(4, 42);
  b.writeUInt32LE(n, 46);
  b.write("data", 50);
  b.writeUInt32LE(n * nch * 4, 54);
  let o = 58;
  for (let i = 0; i < n; i++) for (let c = 0; c < nch; c++, o += 4) b.writeFloatLE(channels[c][i], o);
  return b;
}

/** Peak in dBFS of the 8× reconstruction by sox (resolution 0.01 dB, as `stats` prints it). */
export function soxReconstructedPeakDb(sampleRate: number, channels: Float64Array[]): number {
  const dir = mkdtempSync(join(tmpdir(), "tidemark-sox-peak-"));
  try {
    const input = join(dir, "in.wav"), output = join(dir, "out.wav");
    writeFileSync(input, floatWav(sampleRate, channels));
    const rate = spawnSync("sox", [input, "-e", "floating-point", "-b", "32", output, "rate", "-v", String(8 * sampleRate)], { encoding: "utf8" });
    if (rate.status !== 0) throw new Error(`sox rate failed: ${rate.stderr}`);
    const stats = spawnSync("sox", [output, "-n", "stats"], { encoding: "utf8" });
    const m = /Pk lev dB\s+(-?[\d.]+|-inf)/.exec(stats.stderr);
    if (!m) throw new Error(`no peak in sox stats: ${stats.stderr}`);
    return m[1] === "-inf" ? -Infinity : Number(m[1]);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

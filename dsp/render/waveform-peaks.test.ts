import { mkdtempSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { createWavWriter } from "../io/wav-writer.ts";
import { PeakAccumulator, wavPeaks } from "./waveform-peaks.ts";

const dir = mkdtempSync(path.join(os.tmpdir(), "tidemark-peaks-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe("waveform peaks", () => {
  it("finds each column's extremes across channels (analytic: a known step signal)", () => {
    // 1000 frames, 10 columns of 100: column k holds ±k/10 on one channel, 0 on the other.
    const acc = new PeakAccumulator(1000, 10);
    const left = new Float64Array(1000);
    const right = new Float64Array(1000);
    for (let i = 0; i < 1000; i++) left[i] = (i % 2 ? -1 : 1) * (Math.floor(i / 100) / 10);
    // Fed in odd-sized blocks: the column boundaries must not depend on them.
    for (let start = 0; start < 1000; start += 333) {
      const n = Math.min(333, 1000 - start);
      acc.add([left.subarray(start, start + n), right.subarray(start, start + n)], n);
    }
    const peaks = acc.result(48_000);
    expect(peaks.columns).toBe(10);
    expect(peaks.max).toEqual([0, 13, 26, 39, 51, 64, 77, 89, 102, 115]);
    expect(peaks.min).toEqual(peaks.max.map((v) => (v === 0 ? 0 : -v)));
  });

  it("reads a WAV file a block at a time: a full-scale sine peaks at ±127 in every column", async () => {
    const file = path.join(dir, "sine.wav");
    const sampleRate = 44_100;
    const frames = sampleRate * 3;
    const writer = await createWavWriter(file, { sampleRate, channels: 2, bitDepth: 24, float: false });
    const block = 4096;
    const out = [new Float64Array(block), new Float64Array(block)];
    for (let start = 0; start < frames; start += block) {
      const n = Math.min(block, frames - start);
      for (let i = 0; i < n; i++) out[0][i] = out[1][i] = 0.999 * Math.sin((2 * Math.PI * 441 * (start + i)) / sampleRate);
      await writer.write(out, n);
    }
    await writer.close();
    const peaks = await wavPeaks(file, 300);
    expect(peaks).toMatchObject({ columns: 300, frames, sampleRate });
    // 441 frames a column: each holds more than a whole cycle of the 441 Hz sine (100 frames).
    expect(Math.min(...peaks.max)).toBe(127);
    expect(Math.max(...peaks.min)).toBe(-127);
  });
});

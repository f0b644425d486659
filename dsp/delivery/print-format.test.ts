// Delivery prints from synthesized, deliberately hot sources: after
// conversion, limiting and quantisation the file's true peak is at or under
// the format's ceiling by our BS.1770-4 meter and by ebur128-wasm (second
// opinion); the loudness target is met; the bext chunk carries the measured
// values as Tech 3285 v2 encodes them (round(x 100) / 100).
import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, describe, expect, it } from "vitest";
import { WaveFile } from "wavefile";
import { openWav } from "../io/wav-reader.ts";
import { createWavWriter } from "../io/wav-writer.ts";
import { referenceIntegratedLufs, referenceTruePeakDbtp } from "../testing/ebur128-reference.ts";
import { createRng } from "../testing/signals.ts";
import { readBextFromWav } from "./bext-wav.ts";
import { printDelivery } from "./print-format.ts";

const dir = mkdtempSync(join(tmpdir(), "tidemark-print-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Tones (one near a quarter of the rate, for inter-sample peaks) and seeded noise, peaking above full scale. */
async function writeHotSource(path: string, sampleRate: number, bitDepth: 24 | 32, float: boolean, peakGain: number) {
  const frames = Math.round(sampleRate * 3);
  const left = new Float64Array(frames);
  const right = new Float64Array(frames);
  const rng = createRng(12345);
  for (let n = 0; n < frames; n++) {
    const noise = rng() - 0.5;
    const t = n / sampleRate;
    const swell = 0.6 + 0.4 * Math.sin(2 * Math.PI * 0.7 * t); // some dynamics for the limiter to work on
    const tones = 0.5 * Math.sin(2 * Math.PI * 110 * t) + 0.3 * Math.sin(2 * Math.PI * 2500 * t + 0.3) + 0.25 * Math.sin(2 * Math.PI * 11025 * t + Math.PI / 4);
    left[n] = peakGain * swell * (tones + 0.2 * noise);
    right[n] = peakGain * swell * (0.9 * tones - 0.2 * noise);
  }
  const writer = await createWavWriter(path, { sampleRate, channels: 2, bitDepth, float });
  await writer.write([left, right], frames);
  await writer.close();
  return frames;
}

async function readAll(path: string) {
  const reader = await openWav(path);
  const { frames, channels, sampleRate } = reader.format;
  const data = Array.from({ length: channels }, () => new Float64Array(frames));
  await reader.read(data, frames);
  await reader.close();
  return { sampleRate, frames, data, float32: data.map((c) => Float32Array.from(c)) };
}

describe("printDelivery", () => {
  it("96 kHz float -> 44.1 kHz 16-bit dithered, ceiling -1 dBTP: true peak at or under the ceiling, length, bext", async () => {
    const source = join(dir, "source-96k.wav");
    const sourceFrames = await writeHotSource(source, 96000, 32, true, 1.3);
    const output = join(dir, "cd.wav");
    const result = await printDelivery(source, output,
      { sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 },
      { description: "Harbour Lights, CD master", isrc: "ZZ-TDM-26-00003", originatedAt: new Date(Date.UTC(2026, 11, 1, 23, 50, 1)) });

    const print = await readAll(output);
    expect(print.sampleRate).toBe(44100);
    expect(print.frames).toBe(Math.round((sourceFrames * 44100) / 96000));
    expect(result.frames).toBe(print.frames);
    expect(result.dithered).toBe(true);
    expect(result.analysis.truePeakDbtp).toBeLessThanOrEqual(-1);
    expect(referenceTruePeakDbtp(44100, print.float32)).toBeLessThanOrEqual(-1);
    // The limiter did work: the source's peaks were well above the ceiling.
    expect(result.analysis.truePeakDbtp).toBeGreaterThan(-1.5);
    // 16-bit grid: every sample is a multiple of 1/32768.
    expect(print.data[0].every((v) => Number.isInteger(v * 32768))).toBe(true);

    const bext = await readBextFromWav(output);
    expect(bext?.isrc).toBe("ZZTDM2600003");
    expect(bext?.originationDate).toBe("2026-12-01");
    expect(bext?.originationTime).toBe("23:50:01");
    expect(bext?.loudness).toEqual({
      integratedLufs: Math.round(result.analysis.integratedLufs * 100) / 100,
      loudnessRangeLu: Math.round(result.analysis.loudnessRangeLu * 100) / 100,
      maxTruePeakDbtp: Math.round(result.analysis.truePeakDbtp * 100) / 100,
      maxMomentaryLufs: Math.round(result.analysis.maxMomentaryLufs * 100) / 100,
      maxShortTermLufs: Math.round(result.analysis.maxShortTermLufs * 100) / 100,
    });
    expect(bext?.codingHistory).toEqual([
      "A=PCM-FLOAT,F=96000,W=32,M=stereo,T=Tidemark print",
      "A=PCM,F=44100,W=16,M=stereo,T=Tidemark delivery ceiling -1 dBTP TPDF dither",
    ]);
    // A second reader sees the same file: format and bext loudness.
    const second = new WaveFile(readFileSync(output));
    expect((second.fmt as { sampleRate: number }).sampleRate).toBe(44100);
    const stored = (second.bext as { loudnessValue: number }).loudnessValue;
    expect(stored >= 0x8000 ? stored - 0x10000 : stored).toBe(Math.round(result.analysis.integratedLufs * 100));
    expect(readdirSync(dir).filter((f) => f.endsWith(".tmp"))).toEqual([]);
  });

  it("44.1 kHz 24-bit -> 48 kHz 24-bit to -9 LUFS, ceiling -1 dBTP: target met through the limiter, no dither (word length kept)", async () => {
    const source = join(dir, "source-44k.wav");
    await writeHotSource(source, 44100, 24, false, 0.25);
    const output = join(dir, "stream.wav");
    const result = await printDelivery(source, output, { sampleRate: 48000, bitDepth: 24, dither: "tpdf", ceilingDbtp: -1, targetLufs: -9 });
    const print = await readAll(output);
    expect(result.dithered).toBe(false);
    expect(result.gainDb).toBeGreaterThan(3); // the quiet source had to come up
    expect(Math.abs(result.analysis.integratedLufs - -9)).toBeLessThanOrEqual(0.1);
    expect(Math.abs(referenceIntegratedLufs(48000, print.float32) - -9)).toBeLessThanOrEqual(0.15);
    expect(result.analysis.truePeakDbtp).toBeLessThanOrEqual(-1);
    expect(result.analysis.truePeakDbtp).toBeGreaterThan(-1.5); // the limiter was working
    expect(referenceTruePeakDbtp(48000, print.float32)).toBeLessThanOrEqual(-1);
  });

  it("keeps the rate when it already matches (48 kHz float -> 48 kHz 32-bit float, ceiling -2 dBTP)", async () => {
    const source = join(dir, "source-48k.wav");
    const frames = await writeHotSource(source, 48000, 32, true, 1.1);
    const output = join(dir, "float.wav");
    const result = await printDelivery(source, output, { sampleRate: 48000, bitDepth: "32f", dither: "tpdf", ceilingDbtp: -2 });
    const print = await readAll(output);
    expect(print.frames).toBe(frames);
    expect(result.dithered).toBe(false);
    expect(result.analysis.truePeakDbtp).toBeLessThanOrEqual(-2);
    expect(referenceTruePeakDbtp(48000, print.float32)).toBeLessThanOrEqual(-2);
  });

  it("rejects a format it cannot print, and a bad ISRC, before writing anything", async () => {
    const source = join(dir, "source-48k.wav");
    const output = join(dir, "never.wav");
    await expect(printDelivery(source, output, { sampleRate: 32000 as 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 })).rejects.toThrow(/sampleRate/);
    await expect(printDelivery(source, output, { sampleRate: 44100, bitDepth: 20 as 16, dither: "tpdf", ceilingDbtp: -1 })).rejects.toThrow(/bitDepth/);
    await expect(printDelivery(source, output, { sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: 0.5 })).rejects.toThrow(/ceilingDbtp/);
    await expect(printDelivery(source, output, { sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 }, { isrc: "ZZ-TDM-26" })).rejects.toThrow(/ISRC/);
    expect(existsSync(output)).toBe(false);
  });
});

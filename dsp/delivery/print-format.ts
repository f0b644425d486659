// printDelivery: turns a rendered print (a float or integer WAV) into one
// delivery file of a release, streaming in blocks:
//   read -> resample to the format's rate (skipped when equal) -> true-peak
//   limiter at the format's ceiling (its input gain carries the move to
//   targetLufs) -> quantise to the word length (TPDF dither only when the
//   word length drops below the source's) -> write
// then the written file is measured (BS.1770 loudness, loudness range, true
// peak) and those values go into its bext chunk with the coding history and
// the ISRC. The file appears under its name only when complete.
//
// Loudness target: pass 1 measures the resampled source; the gain is set to
// land on the target; after each print the result is measured and the gain
// moved by the remaining difference (the limiter flattens the curve, so a
// few passes may be needed), at most MAX_PASSES.
// Limiter latency is compensated: its first latencyFrames output frames are
// dropped and as many frames of silence are fed at the end, so the print has
// exactly round(frames x ratio) frames, aligned with the source.

import { randomBytes } from "node:crypto";
import { rename, rm } from "node:fs/promises";
import { basename, dirname, join } from "node:path";
import { openWav, probeWav, type WavFormat } from "../io/wav-reader.ts";
import { createWavWriter } from "../io/wav-writer.ts";
import { Limiter } from "../limit/limiter.ts";
import { LoudnessMeter, type LoudnessAnalysis } from "../loudness/meter.ts";
import { CeilingPeakDetector } from "../limit/ceiling-detector.ts";
import { Quantizer } from "../output/quantizer.ts";
import type { Planar } from "../processor.ts";
import { emptyBext, type Bext, type BextLoudness } from "./bext.ts";
import { writeBextIntoWav } from "./bext-wav.ts";
import { checkDeliveryFormat, codingHistoryLine, wordLengthBits, type DeliveryFormat } from "./delivery-format.ts";
import { normaliseIsrc } from "./isrc.ts";
import { Resampler } from "./resampler.ts";

const READ_FRAMES = 4096;
export const MAX_PASSES = 4;
/** Stop moving the gain once the print is this close to the target (LU). */
export const TARGET_TOLERANCE_LU = 0.05;
const MAX_TARGET_GAIN_DB = 24;

export interface PrintLimiterSettings {
  lookaheadMs: number;
  releaseMs: number;
}

export const DEFAULT_PRINT_LIMITER: PrintLimiterSettings = { lookaheadMs: 1.5, releaseMs: 60 };

export interface PrintMetadata {
  description?: string;
  originator?: string;
  originatorReference?: string;
  isrc?: string | null;
  /** Time of origination; default now (UTC). */
  originatedAt?: Date;
}

export interface PrintResult {
  /** Measured on the written file. */
  analysis: LoudnessAnalysis;
  /** The bext chunk written into the file. */
  bext: Bext;
  frames: number;
  sampleRate: number;
  /** Gain before the limiter (dB); 0 without a loudness target. */
  gainDb: number;
  passes: number;
  dithered: boolean;
}

/** Word length of the source for the "does the bit depth drop" question; float counts as more than any integer. */
const sourceBits = (format: WavFormat): number => (format.sampleFormat === "float" ? Infinity : format.bitDepth);

/** Analysis values into bext fields: non-finite ones (e.g. silence) are left unset rather than invented. */
export function bextLoudnessFromAnalysis(analysis: LoudnessAnalysis): BextLoudness {
  const finite = (v: number) => (Number.isFinite(v) ? v : null);
  return {
    integratedLufs: finite(analysis.integratedLufs),
    loudnessRangeLu: finite(analysis.loudnessRangeLu),
    maxTruePeakDbtp: finite(analysis.truePeakDbtp),
    maxMomentaryLufs: finite(analysis.maxMomentaryLufs),
    maxShortTermLufs: finite(analysis.maxShortTermLufs),
  };
}

/** Streams a WAV file through `each` in blocks. */
async function forEachBlock(path: string, each: (block: Planar, frames: number) => Promise<void> | void): Promise<WavFormat> {
  const reader = await openWav(path);
  try {
    const block = Array.from({ length: reader.format.channels }, () => new Float64Array(READ_FRAMES));
    for (;;) {
      const n = await reader.read(block, READ_FRAMES);
      if (n === 0) break;
      await each(block, n);
    }
    return reader.format;
  } finally {
    await reader.close();
  }
}

/** Resamples a file on the fly (or passes it through) and hands output blocks to `sink`. */
async function streamResampled(path: string, source: WavFormat, outputRate: number, sink: (block: Planar, frames: number) => Promise<void> | void) {
  if (source.sampleRate === outputRate) {
    await forEachBlock(path, sink);
    return;
  }
  const resampler = new Resampler({ inputRate: source.sampleRate, outputRate, channels: source.channels, maxInputFrames: READ_FRAMES });
  const out = Array.from({ length: source.channels }, () => new Float64Array(Math.max(resampler.maxOutputFrames(READ_FRAMES), resampler.maxFlushFrames)));
  await forEachBlock(path, async (block, frames) => {
    const n = resampler.process(block, frames, out);
    if (n > 0) await sink(out, n);
  });
  const n = resampler.flush(out);
  if (n > 0) await sink(out, n);
}

async function measure(path: string, truePeak: boolean): Promise<LoudnessAnalysis> {
  const format = await probeWav(path);
  const meter = new LoudnessMeter(format.sampleRate, format.channels, { truePeak });
  await forEachBlock(path, (block, frames) => meter.process(block, frames));
  return meter.result();
}

async function printPass(
  inputPath: string, tmpPath: string, source: WavFormat, format: DeliveryFormat,
  gainDb: number, limiterSettings: PrintLimiterSettings, dither: "tpdf" | "none",
): Promise<number> {
  const channels = source.channels;
  const maxBlock = Math.ceil((READ_FRAMES * format.sampleRate) / source.sampleRate) + 1024;
  const limiter = new Limiter(
    format.sampleRate, channels,
    { inputGainDb: gainDb, ceilingDbtp: format.ceilingDbtp, lookaheadMs: limiterSettings.lookaheadMs, releaseMs: limiterSettings.releaseMs, truePeak: true },
    maxBlock, new CeilingPeakDetector(format.sampleRate, channels, maxBlock),
  );
  const quantizer = new Quantizer(channels, format.bitDepth, dither);
  const writer = await createWavWriter(tmpPath, {
    sampleRate: format.sampleRate, channels,
    bitDepth: format.bitDepth === "32f" ? 32 : format.bitDepth, float: format.bitDepth === "32f",
  });
  let toDrop = limiter.latencyFrames;
  const view: Float64Array[] = new Array(channels);
  const finish = async (block: Planar, frames: number) => {
    limiter.process(block, frames);
    const skip = Math.min(toDrop, frames);
    toDrop -= skip;
    if (skip === frames) return;
    for (let ch = 0; ch < channels; ch++) view[ch] = block[ch].subarray(skip, frames);
    quantizer.process(view, frames - skip);
    await writer.write(view, frames - skip);
  };
  try {
    await streamResampled(inputPath, source, format.sampleRate, async (block, frames) => {
      // The limiter works in place: copy out of the resampler's buffer in blocks it accepts.
      for (let start = 0; start < frames; start += maxBlock) {
        const n = Math.min(maxBlock, frames - start);
        await finish(block.map((c) => c.subarray(start, start + n)), n);
      }
    });
    const tail = Array.from({ length: channels }, () => new Float64Array(maxBlock));
    for (let left = limiter.latencyFrames; left > 0; left -= maxBlock) {
      for (const c of tail) c.fill(0);
      await finish(tail, Math.min(maxBlock, left));
    }
  } finally {
    await writer.close();
  }
  return writer.framesWritten;
}

const pad2 = (n: number) => String(n).padStart(2, "0");

/** Writes the delivery file `outputPath` from the print at `inputPath`. */
export async function printDelivery(
  inputPath: string, outputPath: string, format: DeliveryFormat,
  metadata: PrintMetadata = {}, limiterSettings: PrintLimiterSettings = DEFAULT_PRINT_LIMITER,
): Promise<PrintResult> {
  checkDeliveryFormat(format);
  const isrc = metadata.isrc ? normaliseIsrc(metadata.isrc) : null; // fail before any work
  const source = await probeWav(inputPath);
  const outBits = wordLengthBits(format.bitDepth);
  const dithered = format.dither === "tpdf" && format.bitDepth !== "32f" && outBits < sourceBits(source);
  const tmpPath = join(dirname(outputPath), `.${basename(outputPath)}.${randomBytes(6).toString("hex")}.tmp`);
  try {
    let gainDb = 0;
    if (format.targetLufs !== undefined) {
      // The resampled, unlimited source: where the gain starts.
      const meter = new LoudnessMeter(format.sampleRate, source.channels, { truePeak: false });
      await streamResampled(inputPath, source, format.sampleRate, (block, frames) => meter.process(block, frames));
      const sourceLufs = meter.result().integratedLufs;
      if (Number.isFinite(sourceLufs)) gainDb = clampGain(format.targetLufs - sourceLufs);
    }
    let passes = 0;
    let frames = 0;
    let analysis: LoudnessAnalysis;
    for (;;) {
      frames = await printPass(inputPath, tmpPath, source, format, gainDb, limiterSettings, dithered ? "tpdf" : "none");
      passes++;
      analysis = await measure(tmpPath, true);
      if (format.targetLufs === undefined || !Number.isFinite(analysis.integratedLufs)) break;
      const missLu = format.targetLufs - analysis.integratedLufs;
      if (Math.abs(missLu) <= TARGET_TOLERANCE_LU || passes >= MAX_PASSES) break;
      gainDb = clampGain(gainDb + missLu);
    }
    const at = metadata.originatedAt ?? new Date();
    const bext: Bext = {
      ...emptyBext(),
      description: metadata.description ?? "",
      originator: metadata.originator ?? "Tidemark",
      originatorReference: metadata.originatorReference ?? "",
      originationDate: `${at.getUTCFullYear()}-${pad2(at.getUTCMonth() + 1)}-${pad2(at.getUTCDate())}`,
      originationTime: `${pad2(at.getUTCHours())}:${pad2(at.getUTCMinutes())}:${pad2(at.getUTCSeconds())}`,
      loudness: bextLoudnessFromAnalysis(analysis),
      codingHistory: [
        codingHistoryLine(source.sampleRate, source.bitDepth, source.sampleFormat === "float", source.channels, "Tidemark print"),
        codingHistoryLine(format.sampleRate, outBits, format.bitDepth === "32f", source.channels,
          `Tidemark delivery ceiling ${format.ceilingDbtp} dBTP${dithered ? " TPDF dither" : ""}`),
      ],
      isrc,
    };
    await writeBextIntoWav(tmpPath, bext);
    await rename(tmpPath, outputPath);
    return { analysis, bext, frames, sampleRate: format.sampleRate, gainDb, passes, dithered };
  } catch (error) {
    await rm(tmpPath, { force: true });
    throw error;
  }
}

const clampGain = (gainDb: number) => Math.max(-MAX_TARGET_GAIN_DB, Math.min(MAX_TARGET_GAIN_DB, gainDb));

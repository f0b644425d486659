// renderFile: streams a WAV file through a chain in blocks and writes the
// result atomically (temporary name beside the output, renamed at the end).
//
// Block flow: reads of READ_FRAMES frames are cut into chunks of one trace
// grid step (10 ms), so every processor sees the same chunk boundaries
// whatever the read size and the gain-reduction traces land on a fixed grid.
// A chunk is processed in place in the read buffer (only one that straddles
// two reads is gathered into a buffer of its own), then metered and written
// from there: no copies on the way.
// Latency: the chain's total latency L (sum of its stages') is compensated
// here: L frames of zeros are fed after the input and the first L output
// frames are dropped, so the output has the input's length and alignment.
//
// Loudness targeting (targetLufs): pass 1 renders with the chain's own gain
// and measures the output's integrated loudness; each next pass moves the
// last limiter's input gain (or a final trim if there is no limiter) by a
// secant step on (gain, measured loudness) — slope 1 dB/dB for the first
// step, then the slope of the last two passes — until the output is within
// TARGET_TOLERANCE_LU of the target (at most MAX_PASSES). Every pass writes
// the file, so the last pass is the delivered one.
// Preview without a region: a first analysis pass of the input (short-term
// loudness only, no true peak) finds the loudest 30 s.
//
// Previews are the print: a region's samples equal the whole-file render's
// over the same frames (same chain, same target). With a loudness target the
// gain is the print's: searched on the whole mix as a print searches it
// (without writing), or given by the caller from a cache (targetGainDb).
// Every processor and both meters start PREROLL_S before the region (see
// preroll.ts: why that is enough, and the alignment that keeps chunks, gating
// blocks and control groups on the print's frames); the dither generator is
// advanced to the pre-roll's first frame. The meters measure the pre-roll
// and then start their totals over at the region's first frame.

import { randomBytes } from "node:crypto";
import { rename, unlink } from "node:fs/promises";
import { basename, dirname, join } from "node:path";
import { buildChain } from "../chain/build-chain.ts";
import type { Chain } from "../chain/schema.ts";
import { openWav, probeWav } from "../io/wav-reader.ts";
import { createWavWriter } from "../io/wav-writer.ts";
import { LoudnessMeter, type LoudnessAnalysis } from "../loudness/meter.ts";
import { Quantizer } from "../output/quantizer.ts";
import { loudestWindow } from "./loudest-window.ts";
import { prerollStartFrame } from "./preroll.ts";

export const GRID_MS = 10;
export const READ_FRAMES = 32768;
export const TARGET_TOLERANCE_LU = 0.1;
/** Stop searching once this close (margin inside the ±0.1 LU promise). */
const TARGET_AIM_LU = 0.03;
export const MAX_PASSES = 6;
export const PREVIEW_WINDOW_S = 30;
const MAX_TARGET_GAIN_DB = 36;

export interface RenderRegion {
  startS: number;
  endS: number;
}

export interface RenderOptions {
  region?: RenderRegion;
  preview?: boolean;
  /** Overrides chain.output.targetLufs. */
  targetLufs?: number;
  /**
   * The gain this chain needs to reach the target on this whole mix, found by
   * an earlier render (a cache): used as is, no search. Only with a target.
   */
  targetGainDb?: number;
  onProgress?: (fraction: number) => void;
  /** Frames per read (tests use it to check block-size independence). */
  readFrames?: number;
}

export interface RenderAnalysis extends LoudnessAnalysis {
  durationS: number;
  sampleRate: number;
  channels: number;
  bitDepth: number;
  format: string;
}

export interface StageTrace {
  index: number;
  type: string;
  names: string[];
  /** [trace][grid step], dB ≥ 0 */
  gainReductionDb: number[][];
}

export interface RenderResult {
  input: RenderAnalysis;
  output: RenderAnalysis;
  traces: { gridMs: number; stages: StageTrace[]; shortTermLufs: number[] };
  passes: number;
  region?: RenderRegion;
  /** The limiter input gain (or final trim) added to reach targetLufs. */
  targetGainDb?: number;
  latencyFrames: number;
}

export class RenderInputError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "RenderInputError";
  }
}

export async function renderFile(inputPath: string, outputPath: string, chain: Chain, options: RenderOptions = {}): Promise<RenderResult> {
  const format = await probeWav(inputPath);
  if (chain.output.sampleRate !== undefined && chain.output.sampleRate !== format.sampleRate) {
    throw new RenderInputError(
      `output sample rate ${chain.output.sampleRate} Hz differs from the input's ${format.sampleRate} Hz; sample-rate conversion is not available yet (omit output.sampleRate or set it to ${format.sampleRate})`,
    );
  }
  const durationS = format.frames / format.sampleRate;
  let region = options.region;
  if (region) {
    if (!(region.startS >= 0 && region.endS > region.startS)) throw new RenderInputError(`region ${region.startS}:${region.endS} must have 0 ≤ start < end`);
    if (region.startS >= durationS) throw new RenderInputError(`region starts at ${region.startS} s, after the end of the file (${durationS.toFixed(3)} s)`);
    region = { startS: region.startS, endS: Math.min(region.endS, durationS) };
  } else if (options.preview) {
    const shortTermLufs = await shortTermCurve(inputPath);
    region = loudestWindow(shortTermLufs, GRID_MS, durationS, PREVIEW_WINDOW_S);
  }
  const target = options.targetLufs ?? chain.output.targetLufs;
  const tmpPath = join(dirname(outputPath), `.${basename(outputPath)}.${randomBytes(6).toString("hex")}.tmp`);
  const readFrames = options.readFrames ?? READ_FRAMES;
  const known = target !== undefined ? options.targetGainDb : undefined;
  // A region with a target and no known gain: the whole-mix search first (not written), then the region.
  const searchFirst = target !== undefined && known === undefined && region !== undefined;
  const expectedPasses = target === undefined || known !== undefined ? 1 : searchFirst ? 4 : 3;
  let passesRun = 0;
  const progress = (f: number) => options.onProgress?.(Math.min(0.99, (passesRun + f) / Math.max(expectedPasses, passesRun + 1)));
  try {
    let gainDb = known ?? 0;
    let result: PassResult | undefined;
    let inputWhole: RenderAnalysis | null = null;
    if (target !== undefined && known === undefined) {
      // The print's search: the same passes whether they write (a print) or not (before a region).
      let previous: { gainDb: number; lufs: number } | null = null;
      for (;;) {
        result = await renderPass(inputPath, searchFirst ? null : tmpPath, chain, gainDb, undefined, readFrames, progress, inputWhole);
        inputWhole = result.input;
        passesRun++;
        const lufs = result.output.integratedLufs;
        if (!Number.isFinite(lufs) || Math.abs(lufs - target) <= TARGET_AIM_LU || passesRun >= MAX_PASSES) break;
        let slope = 1;
        if (previous && previous.gainDb !== gainDb) slope = (lufs - previous.lufs) / (gainDb - previous.gainDb);
        // A limiter flattens the curve; a wrong-signed or tiny slope would overshoot.
        slope = Math.min(1.5, Math.max(0.1, slope));
        previous = { gainDb, lufs };
        gainDb = Math.max(-MAX_TARGET_GAIN_DB, Math.min(MAX_TARGET_GAIN_DB, gainDb + (target - lufs) / slope));
      }
    }
    if (result === undefined || searchFirst) {
      result = await renderPass(inputPath, tmpPath, chain, gainDb, region, readFrames, progress, null);
      passesRun++;
    }
    await rename(tmpPath, outputPath);
    options.onProgress?.(1);
    return {
      input: result.input,
      output: result.output,
      traces: { gridMs: GRID_MS, stages: result.stages, shortTermLufs: result.output.shortTermLufs },
      passes: passesRun,
      ...(region ? { region } : {}),
      ...(target !== undefined ? { targetGainDb: gainDb } : {}),
      latencyFrames: result.latencyFrames,
    };
  } catch (err) {
    await unlink(tmpPath).catch(() => {});
    throw err;
  }
}

interface PassResult {
  input: RenderAnalysis;
  output: RenderAnalysis;
  stages: StageTrace[];
  latencyFrames: number;
}

const PROGRESS_EVERY_MS = 250;

/** One pass over the file (or a pre-rolled region of it); outPath null measures without writing. */
async function renderPass(
  inputPath: string,
  outPath: string | null,
  chain: Chain,
  extraGainDb: number,
  region: RenderRegion | undefined,
  readFrames: number,
  onProgress: (fraction: number) => void,
  previousInput: RenderAnalysis | null,
): Promise<PassResult> {
  const reader = await openWav(inputPath);
  const fmt = reader.format;
  const sr = fmt.sampleRate, nch = fmt.channels;
  const gridFrames = Math.max(1, Math.round((GRID_MS / 1000) * sr));
  let built: ReturnType<typeof buildChain>;
  try {
    built = buildChain(chain, sr, nch, gridFrames, extraGainDb);
  } catch (err) {
    await reader.close();
    // A chain can be valid JSON yet not fit this file (e.g. 23 kHz at 44.1 kHz).
    if (err instanceof RangeError) throw new RenderInputError(`the chain does not fit this ${sr} Hz file: ${err.message}`);
    throw err;
  }
  const latency = built.latencyFrames;
  const bitDepth = chain.output.bitDepth;
  const quantizer = new Quantizer(nch, bitDepth, chain.output.dither);
  const writer = outPath === null ? null : await createWavWriter(outPath, { sampleRate: sr, channels: nch, bitDepth: bitDepth === "32f" ? 32 : bitDepth, float: bitDepth === "32f" });
  // The input is the same on every pass: meter it once.
  const meterIn = previousInput ? null : new LoudnessMeter(sr, nch, { truePeak: true, gridMs: GRID_MS });
  const meterOut = new LoudnessMeter(sr, nch, { truePeak: true, gridMs: GRID_MS, spectrum: true });
  const regionStart = region ? Math.round(region.startS * sr) : 0;
  const endFrame = region ? Math.min(fmt.frames, Math.round(region.endS * sr)) : fmt.frames;
  const totalFrames = endFrame - regionStart;
  // Processing starts at the pre-roll's first frame; the dither continues from there as in the whole-file render.
  const startFrame = prerollStartFrame(regionStart, sr);
  quantizer.skipFrames(startFrame);

  const readBufs = Array.from({ length: nch }, () => new Float64Array(readFrames));
  const spareBufs = Array.from({ length: nch }, () => new Float64Array(readFrames));
  // A chunk that straddles two reads (or the zero tail) is gathered here;
  // every other chunk is processed in place in the read buffer (views).
  const chunk = Array.from({ length: nch }, () => new Float64Array(gridFrames));
  const views: Float64Array[] = Array.from({ length: nch }, () => new Float64Array(0));
  let chunkFill = 0;
  let latencyLeft = latency; // output frames that are the chain's delay: never kept
  let prerollLeft = regionStart - startFrame; // output frames of the pre-roll: metered, not kept
  let written = 0;

  const grStages = built.stages.filter((s) => s.gainReduction);
  const grScratch = grStages.map((s) => new Float64Array(s.gainReduction!.traceNames.length));
  const grTraces = grStages.map((s) => s.gainReduction!.traceNames.map(() => [] as number[]));

  /** The chain, the quantizer and the traces on one chunk, in place; then its kept frames metered and written. */
  const processChunk = async (data: Float64Array[], frames: number): Promise<void> => {
    for (const s of built.stages) s.processor.process(data, frames);
    quantizer.process(data, frames);
    for (let g = 0; g < grStages.length; g++) {
      grStages[g].gainReduction!.takeGainReductionDb(grScratch[g]);
      for (let t = 0; t < grScratch[g].length; t++) grTraces[g][t].push(grScratch[g][t]);
    }
    let from = 0;
    if (latencyLeft > 0) {
      from = Math.min(frames, latencyLeft);
      latencyLeft -= from;
    }
    if (prerollLeft > 0 && from < frames) {
      const n = Math.min(frames - from, prerollLeft);
      meterOut.process(from === 0 ? data : data.map((d) => d.subarray(from, from + n)), n);
      prerollLeft -= n;
      from += n;
      if (prerollLeft === 0) meterOut.restartTotals();
    }
    // Never write past the input's length (the zero tail only flushes the latency).
    const keep = Math.min(frames - from, totalFrames - written);
    if (keep <= 0) return;
    const out = from === 0 ? data : data.map((d) => d.subarray(from, from + keep));
    meterOut.process(out, keep);
    await writer?.write(out, keep);
    written += keep;
  };

  /** Feeds n frames from src (offset off) into the chunked chain. */
  const feed = async (src: Float64Array[] | null, off: number, n: number): Promise<void> => {
    let i = 0;
    while (i < n) {
      if (src && chunkFill === 0 && n - i >= gridFrames) {
        for (let c = 0; c < nch; c++) views[c] = src[c].subarray(off + i, off + i + gridFrames);
        await processChunk(views, gridFrames);
        i += gridFrames;
        continue;
      }
      const k = Math.min(n - i, gridFrames - chunkFill);
      for (let c = 0; c < nch; c++) {
        if (src) chunk[c].set(src[c].subarray(off + i, off + i + k), chunkFill);
        else chunk[c].fill(0, chunkFill, chunkFill + k);
      }
      chunkFill += k;
      i += k;
      if (chunkFill === gridFrames) {
        await processChunk(chunk, gridFrames);
        chunkFill = 0;
      }
    }
  };

  try {
    let pos = reader.skip(startFrame);
    let lastProgress = Date.now();
    // Double-buffered: the next read is in flight while this block is processed.
    let current = readBufs;
    let spare = spareBufs;
    // A region that ends before the file does reads on for the chain's latency (the lookahead sees
    // what the print's sees there); only what lies past the file's end is flushed with zeros.
    const readEnd = Math.min(fmt.frames, endFrame + latency);
    let pending = reader.read(current, Math.min(readFrames, readEnd - pos));
    while (pos < readEnd) {
      const n = await pending;
      if (n === 0) break;
      const bufs = current;
      const nextPos = pos + n;
      if (nextPos < readEnd) {
        current = spare;
        spare = bufs;
        pending = reader.read(current, Math.min(readFrames, readEnd - nextPos));
      } else pending = Promise.resolve(0);
      const from = Math.max(0, startFrame - pos);
      if (from < n) {
        const use = n - from;
        if (from > 0) for (let c = 0; c < nch; c++) bufs[c].copyWithin(0, from, n);
        if (meterIn) {
          // The input meter too runs through the pre-roll and starts its totals at the region.
          // Frames past the region (read for the latency) are not the input's.
          const absStart = pos + from;
          const inUse = Math.max(0, Math.min(use, endFrame - absStart));
          const cut = Math.min(inUse, Math.max(0, regionStart - absStart));
          if (cut > 0) meterIn.process(bufs, cut);
          if (cut > 0 && absStart + cut === regionStart) meterIn.restartTotals();
          if (inUse > cut) meterIn.process(cut === 0 ? bufs : bufs.map((b) => b.subarray(cut, inUse)), inUse - cut);
        }
        await feed(bufs, 0, use);
      }
      pos = nextPos;
      const now = Date.now();
      if (now - lastProgress >= PROGRESS_EVERY_MS) {
        lastProgress = now;
        onProgress(Math.max(0, pos - startFrame) / Math.max(1, endFrame - startFrame));
      }
    }
    await feed(null, 0, latency - (readEnd - endFrame));
    if (chunkFill > 0) await processChunk(chunk, chunkFill);
    await writer?.close();
  } finally {
    await reader.close();
  }

  const gridDrop = Math.round((latency + regionStart - startFrame) / gridFrames);
  const gridKeep = Math.ceil(totalFrames / gridFrames);
  const stages: StageTrace[] = grStages.map((s, g) => ({
    index: s.index,
    type: s.type,
    names: [...s.gainReduction!.traceNames],
    gainReductionDb: grTraces[g].map((t) => t.slice(gridDrop, gridDrop + gridKeep).map((v) => Math.round(v * 1000) / 1000)),
  }));
  const inAnalysis = meterIn ? meterIn.result() : previousInput!;
  const outAnalysis = meterOut.result();
  const durationS = totalFrames / sr;
  const outBits = bitDepth === "32f" ? 32 : bitDepth;
  return {
    input: meterIn ? { ...inAnalysis, durationS, sampleRate: sr, channels: nch, bitDepth: fmt.bitDepth, format: fmt.formatName } : previousInput!,
    output: { ...outAnalysis, durationS, sampleRate: sr, channels: nch, bitDepth: outBits, format: bitDepth === "32f" ? "float 32-bit" : `PCM ${outBits}-bit` },
    stages,
    latencyFrames: latency,
  };
}

/** Short-term loudness of a whole file on the GRID_MS grid (preview search). */
async function shortTermCurve(inputPath: string): Promise<number[]> {
  const reader = await openWav(inputPath);
  try {
    const { sampleRate, channels } = reader.format;
    const meter = new LoudnessMeter(sampleRate, channels, { truePeak: false, gridMs: GRID_MS });
    const bufs = Array.from({ length: channels }, () => new Float64Array(READ_FRAMES));
    for (;;) {
      const n = await reader.read(bufs, READ_FRAMES);
      if (n === 0) break;
      meter.process(bufs, n);
    }
    return meter.result().shortTermLufs;
  } finally {
    await reader.close();
  }
}

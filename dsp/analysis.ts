// Analysis of a WAV file: streams it through the loudness meter (with the
// third-octave spectrum) in blocks and adds the file's format. Memory stays flat whatever the file's length.

import { openWav } from "./io/wav-reader.ts";
import { type LoudnessAnalysis, LoudnessMeter } from "./loudness/meter.ts";

export interface FileAnalysis extends LoudnessAnalysis {
  durationS: number;
  sampleRate: number;
  channels: number;
  bitDepth: number;
  /** e.g. "PCM 24-bit", "float 32-bit" */
  format: string;
}

export interface AnalyzeOptions {
  /** Called with the fraction done (0..1) after each block. */
  onProgress?: (fraction: number) => void;
  /** Frames per read; default 65536. */
  blockFrames?: number;
  /** Measure the third-octave spectrum in the same pass; default true (false only to measure its cost). */
  spectrum?: boolean;
}

const DEFAULT_BLOCK_FRAMES = 65536;

export async function analyzeFile(path: string, options: AnalyzeOptions = {}): Promise<FileAnalysis> {
  const reader = await openWav(path);
  try {
    const { format } = reader;
    const blockFrames = options.blockFrames ?? DEFAULT_BLOCK_FRAMES;
    const meter = new LoudnessMeter(format.sampleRate, format.channels, { truePeak: true, spectrum: options.spectrum ?? true });
    const buffers = Array.from({ length: format.channels }, () => new Float64Array(blockFrames));
    let done = 0;
    for (;;) {
      const n = await reader.read(buffers, blockFrames);
      if (n === 0) break;
      meter.process(buffers, n);
      done += n;
      options.onProgress?.(done / format.frames);
    }
    return {
      ...meter.result(),
      durationS: format.frames / format.sampleRate,
      sampleRate: format.sampleRate,
      channels: format.channels,
      bitDepth: format.bitDepth,
      format: format.formatName,
    };
  } finally {
    await reader.close();
  }
}

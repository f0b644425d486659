// `tidemark analyze FILE.wav`: prints one JSON object with the file's
// loudness, peaks, correlation, format and third-octave spectrum. Silent
// levels (−Infinity) print as null with a note. Errors go to stderr with
// exit code 2.

import { analyzeFile, type FileAnalysis } from "../analysis.ts";
import { probeWav, WavFormatError } from "../io/wav-reader.ts";
import { finiteOrNull } from "../units.ts";

const PROGRESS_MIN_DURATION_S = 5;

export interface AnalyzeReport {
  integratedLufs: number | null;
  loudnessRangeLu: number;
  truePeakDbtp: number | null;
  reconstructedPeakDb: number | null;
  samplePeakDbfs: number | null;
  maxMomentaryLufs: number | null;
  maxShortTermLufs: number | null;
  correlation: number;
  durationS: number;
  sampleRate: number;
  channels: number;
  bitDepth: number;
  format: string;
  /** Long-term third-octave levels, dB re a full-scale sine (null: silent or above Nyquist). */
  thirdOctave: Array<{ centreHz: number; levelDb: number | null }>;
  notes?: string[];
}

const round = (v: number, digits: number) => Math.round(v * 10 ** digits) / 10 ** digits;

export function toReport(a: FileAnalysis): AnalyzeReport {
  const notes: string[] = [];
  const level = (value: number, what: string): number | null => {
    if (Number.isFinite(value)) return round(value, 2);
    notes.push(`${what} is below measurement (silence or too short); reported as null`);
    return finiteOrNull(value);
  };
  const report: AnalyzeReport = {
    integratedLufs: level(a.integratedLufs, "integratedLufs"),
    loudnessRangeLu: round(a.loudnessRangeLu, 2),
    truePeakDbtp: level(a.truePeakDbtp, "truePeakDbtp"),
    reconstructedPeakDb: level(a.reconstructedPeakDb, "reconstructedPeakDb"),
    samplePeakDbfs: level(a.samplePeakDbfs, "samplePeakDbfs"),
    maxMomentaryLufs: level(a.maxMomentaryLufs, "maxMomentaryLufs"),
    maxShortTermLufs: level(a.maxShortTermLufs, "maxShortTermLufs"),
    correlation: round(a.correlation, 3),
    durationS: round(a.durationS, 3),
    sampleRate: a.sampleRate,
    channels: a.channels,
    bitDepth: a.bitDepth,
    format: a.format,
    thirdOctave: (a.thirdOctave ?? []).map((b) => ({ centreHz: b.centreHz, levelDb: Number.isFinite(b.levelDb) ? round(b.levelDb, 1) : null })),
  };
  if (a.channels === 2 && a.samplePeakDbfs === -Infinity) notes.push("correlation is undefined for silence; reported as 0");
  if (a.durationS < 0.4) notes.push("shorter than one 400 ms gating block: no integrated loudness");
  if (notes.length > 0) report.notes = notes;
  return report;
}

export async function runAnalyze(argv: string[]): Promise<number> {
  const files = argv.filter((a) => !a.startsWith("-"));
  if (argv.includes("--help") || argv.includes("-h")) {
    process.stdout.write("usage: tidemark analyze FILE.wav\n");
    return 0;
  }
  if (files.length !== 1) {
    process.stderr.write("usage: tidemark analyze FILE.wav\n");
    return 1;
  }
  const path = files[0];
  let progressShown = false;
  try {
    const format = await probeWav(path);
    const showProgress = process.stderr.isTTY === true && format.frames / format.sampleRate > PROGRESS_MIN_DURATION_S;
    let lastPercent = -1;
    const analysis = await analyzeFile(path, {
      onProgress: showProgress
        ? (fraction) => {
            const percent = Math.floor(fraction * 100);
            if (percent === lastPercent) return;
            lastPercent = percent;
            progressShown = true;
            process.stderr.write(`\ranalysing ${percent}%`);
          }
        : undefined,
    });
    if (progressShown) process.stderr.write("\r\x1b[K");
    process.stdout.write(`${JSON.stringify(toReport(analysis), null, 2)}\n`);
    return 0;
  } catch (err) {
    if (progressShown) process.stderr.write("\n");
    if (err instanceof WavFormatError) {
      process.stderr.write(`tidemark analyze: ${path}: ${err.message} [${err.code}]\n`);
    } else if ((err as NodeJS.ErrnoException).code === "ENOENT") {
      process.stderr.write(`tidemark analyze: ${path}: no such file\n`);
    } else {
      process.stderr.write(`tidemark analyze: ${path}: ${(err as Error).message}\n`);
    }
    return 2;
  }
}

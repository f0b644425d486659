// Speed of the delivery resampler: ns per output sample per channel, for the
// conversions a release usually needs, stereo, 4096-frame blocks, after one
// warm-up pass; then a whole delivery print (30 s of 96 kHz float stereo to
// 44.1 kHz 16-bit) and the streamed bext insertion into that source file.
// Prints a table; figures depend on the machine and its load.
import { mkdtempSync, rmSync, statSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { emptyBext } from "../dsp/delivery/bext.ts";
import { writeBextIntoWav } from "../dsp/delivery/bext-wav.ts";
import { printDelivery } from "../dsp/delivery/print-format.ts";
import { Resampler } from "../dsp/delivery/resampler.ts";
import { createWavWriter } from "../dsp/io/wav-writer.ts";

const CONVERSIONS: [number, number][] = [
  [48000, 44100], [96000, 48000], [96000, 44100], [44100, 48000], [88200, 44100], [192000, 44100], [192000, 48000], [44100, 96000],
];
const BLOCK_FRAMES = 4096;
const CHANNELS = 2;

function timeConversion(inputRate: number, outputRate: number, seconds: number) {
  const resampler = new Resampler({ inputRate, outputRate, channels: CHANNELS, maxInputFrames: BLOCK_FRAMES });
  const input = Array.from({ length: CHANNELS }, (_, ch) => {
    const block = new Float64Array(BLOCK_FRAMES);
    for (let n = 0; n < BLOCK_FRAMES; n++) block[n] = Math.sin(n * (0.01 + ch * 0.003));
    return block;
  });
  const output = Array.from({ length: CHANNELS }, () => new Float64Array(Math.max(resampler.maxOutputFrames(BLOCK_FRAMES), resampler.maxFlushFrames)));
  const blocks = Math.ceil((inputRate * seconds) / BLOCK_FRAMES);
  let outputFrames = 0;
  const start = process.hrtime.bigint();
  for (let b = 0; b < blocks; b++) outputFrames += resampler.process(input, BLOCK_FRAMES, output);
  outputFrames += resampler.flush(output);
  const elapsedNs = Number(process.hrtime.bigint() - start);
  return { design: resampler.design, outputFrames, elapsedNs };
}

export async function run(): Promise<void> {
  console.log("delivery: resampler (Kaiser-windowed sinc, 120 dB stopband), stereo, 4096-frame blocks, 5 s of input");
  console.log("conversion        taps/phase  phases  ns/output sample/channel  x realtime");
  for (const [inputRate, outputRate] of CONVERSIONS) {
    timeConversion(inputRate, outputRate, 0.5); // warm-up
    const { design, outputFrames, elapsedNs } = timeConversion(inputRate, outputRate, 5);
    const nsPerSample = elapsedNs / (outputFrames * CHANNELS);
    const realtime = (outputFrames / outputRate) / (elapsedNs / 1e9);
    const label = `${inputRate / 1000} -> ${outputRate / 1000} kHz`.padEnd(18);
    console.log(`${label}${String(design.tapsPerPhase).padStart(10)}${String(design.up).padStart(8)}${nsPerSample.toFixed(1).padStart(26)}${realtime.toFixed(0).padStart(12)}`);
  }
  await timePrint();
}

async function timePrint(): Promise<void> {
  const dir = mkdtempSync(join(tmpdir(), "tidemark-bench-delivery-"));
  try {
    const source = join(dir, "source.wav");
    const seconds = 30;
    const frames = 96000 * seconds;
    const writer = await createWavWriter(source, { sampleRate: 96000, channels: 2, bitDepth: 32, float: true });
    const block = [new Float64Array(4096), new Float64Array(4096)];
    for (let start = 0; start < frames; start += 4096) {
      for (let n = 0; n < 4096; n++) {
        const t = (start + n) / 96000;
        block[0][n] = 1.2 * Math.sin(2 * Math.PI * 220 * t) * Math.sin(2 * Math.PI * 0.5 * t);
        block[1][n] = 0.9 * Math.sin(2 * Math.PI * 3000 * t);
      }
      await writer.write(block, Math.min(4096, frames - start));
    }
    await writer.close();
    let start = process.hrtime.bigint();
    const result = await printDelivery(source, join(dir, "cd.wav"), { sampleRate: 44100, bitDepth: 16, dither: "tpdf", ceilingDbtp: -1 });
    let elapsedS = Number(process.hrtime.bigint() - start) / 1e9;
    console.log(`print 30 s 96 kHz float -> 44.1 kHz 16-bit (resample, limit, dither, write, measure, bext): ${elapsedS.toFixed(2)} s, ${(seconds / elapsedS).toFixed(1)} x realtime, true peak ${result.analysis.truePeakDbtp.toFixed(2)} dBTP`);
    const sizeMb = statSync(source).size / 1e6;
    start = process.hrtime.bigint();
    await writeBextIntoWav(source, { ...emptyBext(), description: "bench" });
    elapsedS = Number(process.hrtime.bigint() - start) / 1e9;
    console.log(`bext insertion into a ${sizeMb.toFixed(0)} MB file (streamed copy + rename): ${elapsedS.toFixed(2)} s, ${(sizeMb / elapsedS).toFixed(0)} MB/s`);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === `file://${process.argv[1]}`) await run();

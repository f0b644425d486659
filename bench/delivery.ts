// Speed of the delivery resampler: ns per output sample per channel, for the
// conversions a release usually needs, stereo, 4096-frame blocks, after one
// warm-up pass. Prints a table; figures depend on the machine.
import { Resampler } from "../dsp/delivery/resampler.ts";

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
}

if (import.meta.url === `file://${process.argv[1]}`) await run();

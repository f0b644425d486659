// Streaming sample-rate conversion by a rational ratio L/M (output rate /
// input rate in lowest terms, e.g. 48 kHz -> 44.1 kHz is 147/160), with a
// polyphase Kaiser-windowed sinc filter. Double precision throughout.
//
// The filter (the "design"), stated once for every ratio:
// - passband edge  = 20/22.05 (0.9070) of the lower of the two Nyquist
//   frequencies: 20 kHz when 44.1 kHz is involved, 21.77 kHz for 48 kHz,
//   40 kHz for 88.2 kHz, ...
// - stopband edge  = the lower Nyquist frequency itself, so nothing that
//   would alias (downsampling) or image (upsampling) survives above it.
// - cutoff (-6 dB) = the middle of that transition band.
// - stopband attenuation 120 dB by default; the Kaiser formulas below give
//   passband ripple of the same order (1e-6, i.e. ~1e-5 dB).
// - taps per phase = the Kaiser length estimate for that attenuation and
//   transition width at the input rate, rounded up to a multiple of 4, 2K
//   (184 for 48->44.1, 336 for 96->48, 168 for 44.1->48; `design.tapsPerPhase`).
// Kaiser's design formulas (from memory; Kaiser 1974, as printed in
// Oppenheim & Schafer, "Discrete-Time Signal Processing"):
//   beta = 0.1102 (A - 8.7)                      for A > 50 dB
//   N    = (A - 8) / (2.285 * deltaOmega)        deltaOmega in rad/sample
//
// Timing: output frame n sits exactly at input time n * M / L (the kernel is
// centred there), so the output is aligned with the input with no delay. To
// compute it the resampler must have seen K input frames beyond that time:
// that lookahead is the latency (`latencyInputFrames`, `latencyFrames`), and
// it is compensated by `flush()`, which feeds silence until the output has
// exactly round(inputFrames * L / M) frames.

import type { Planar } from "../processor.ts";

export interface ResamplerOptions {
  /** Stopband attenuation the filter is designed for (dB, > 50). Default 120. */
  stopbandDb?: number;
  /** Passband edge as a fraction of the lower Nyquist frequency. Default 20/22.05. */
  passbandFraction?: number;
}

export interface ResamplerDesign {
  inputRate: number;
  outputRate: number;
  /** Upsampling factor (number of polyphase branches). */
  up: number;
  /** Downsampling factor. */
  down: number;
  passbandEdgeHz: number;
  stopbandEdgeHz: number;
  cutoffHz: number;
  stopbandDb: number;
  kaiserBeta: number;
  /** Input frames each output frame is computed from (2K). */
  tapsPerPhase: number;
  /** tapsPerPhase * up: the length of the prototype filter at rate up * inputRate. */
  totalTaps: number;
}

const DEFAULT_STOPBAND_DB = 120;
const DEFAULT_PASSBAND_FRACTION = 20000 / 22050;
/** Guards against absurd ratios (e.g. 44100 -> 47999) whose tables would not fit. */
const MAX_TABLE_COEFFS = 8_000_000;

const gcd = (a: number, b: number): number => (b === 0 ? a : gcd(b, a % b));

/** Modified Bessel function of the first kind, order 0 (power series). */
export function besselI0(x: number): number {
  let sum = 1;
  let term = 1;
  const halfX = x / 2;
  for (let k = 1; k < 500; k++) {
    term *= (halfX / k) * (halfX / k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

/** Works out the filter for a conversion; pure, no tables. */
export function designResampler(inputRate: number, outputRate: number, options: ResamplerOptions = {}): ResamplerDesign {
  if (!Number.isInteger(inputRate) || !Number.isInteger(outputRate) || inputRate <= 0 || outputRate <= 0) {
    throw new Error(`sample rates must be positive integers (got ${inputRate} -> ${outputRate})`);
  }
  const stopbandDb = options.stopbandDb ?? DEFAULT_STOPBAND_DB;
  const passbandFraction = options.passbandFraction ?? DEFAULT_PASSBAND_FRACTION;
  if (!(stopbandDb > 50)) throw new Error(`stopbandDb must be above 50 dB (got ${stopbandDb})`);
  if (!(passbandFraction > 0 && passbandFraction < 1)) {
    throw new Error(`passbandFraction must be between 0 and 1 (got ${passbandFraction})`);
  }
  const divisor = gcd(inputRate, outputRate);
  const up = outputRate / divisor;
  const down = inputRate / divisor;
  const nyquistHz = Math.min(inputRate, outputRate) / 2;
  const passbandEdgeHz = nyquistHz * passbandFraction;
  const stopbandEdgeHz = nyquistHz;
  const cutoffHz = (passbandEdgeHz + stopbandEdgeHz) / 2;
  const kaiserBeta = 0.1102 * (stopbandDb - 8.7);
  const deltaOmega = (2 * Math.PI * (stopbandEdgeHz - passbandEdgeHz)) / inputRate;
  const lengthFrames = (stopbandDb - 8) / (2.285 * deltaOmega);
  // Half-width K must also exceed one output step in input frames, so the
  // history buffer never has to skip input (only matters for extreme ratios).
  // Even K, so 2K is a multiple of 4 for the unrolled inner loop.
  const halfTaps = 2 * Math.ceil(Math.max(Math.ceil(lengthFrames / 2), Math.ceil(down / up) + 2) / 2);
  const tapsPerPhase = 2 * halfTaps;
  if (tapsPerPhase * up > MAX_TABLE_COEFFS) {
    throw new Error(`ratio ${outputRate}/${inputRate} needs ${tapsPerPhase * up} coefficients; not supported`);
  }
  return {
    inputRate, outputRate, up, down, passbandEdgeHz, stopbandEdgeHz, cutoffHz,
    stopbandDb, kaiserBeta, tapsPerPhase, totalTaps: tapsPerPhase * up,
  };
}

/**
 * The polyphase table: for phase p (output time = integer + p/up input frames)
 * the tapsPerPhase coefficients applied to input frames i0-K+1 ... i0+K.
 */
export function polyphaseTable(design: ResamplerDesign): Float64Array {
  const { up, tapsPerPhase, cutoffHz, inputRate, kaiserBeta } = design;
  const halfTaps = tapsPerPhase / 2;
  const table = new Float64Array(up * tapsPerPhase);
  const bandwidth = (2 * cutoffHz) / inputRate; // cutoff as a fraction of input Nyquist
  const windowNorm = 1 / besselI0(kaiserBeta);
  for (let phase = 0; phase < up; phase++) {
    for (let k = 0; k < tapsPerPhase; k++) {
      // Distance in input frames from the output instant to input frame i0-K+1+k.
      const x = phase / up + halfTaps - 1 - k;
      const u = bandwidth * x;
      const sinc = u === 0 ? 1 : Math.sin(Math.PI * u) / (Math.PI * u);
      const r = x / halfTaps;
      const window = r * r >= 1 ? (Math.abs(r) === 1 ? windowNorm : 0) : besselI0(kaiserBeta * Math.sqrt(1 - r * r)) * windowNorm;
      table[phase * tapsPerPhase + k] = bandwidth * sinc * window;
    }
  }
  return table;
}

/** round(inputFrames * up / down), exactly, for the output length. */
export const resampledLength = (inputFrames: number, up: number, down: number): number =>
  Math.floor((2 * inputFrames * up + down) / (2 * down));

export class Resampler {
  readonly design: ResamplerDesign;
  readonly channels: number;
  readonly maxInputFrames: number;
  /** Input frames the resampler must see beyond an output instant before computing it. */
  readonly latencyInputFrames: number;
  /** The same lookahead in output frames (rounded up). */
  readonly latencyFrames: number;
  /** Largest number of frames `flush()` writes. */
  readonly maxFlushFrames: number;

  private readonly table: Float64Array;
  private readonly history: Float64Array[];
  private readonly halfTaps: number;
  private readonly stepFrames: number;
  private readonly stepPhase: number;
  /** Absolute input index of history[ch][0]. */
  private historyStart = 0;
  private historyFill = 0;
  /** Next output frame's position: input index and phase (of `up`). */
  private nextIndex = 0;
  private nextPhase = 0;
  private inputTotal = 0;
  private outputTotal = 0;
  private flushed = false;

  constructor(settings: { inputRate: number; outputRate: number; channels: number; maxInputFrames: number } & ResamplerOptions) {
    const { inputRate, outputRate, channels, maxInputFrames } = settings;
    if (!Number.isInteger(channels) || channels < 1) throw new Error(`channels must be a positive integer (got ${channels})`);
    if (!Number.isInteger(maxInputFrames) || maxInputFrames < 1) {
      throw new Error(`maxInputFrames must be a positive integer (got ${maxInputFrames})`);
    }
    this.design = designResampler(inputRate, outputRate, settings);
    this.channels = channels;
    this.maxInputFrames = maxInputFrames;
    this.table = polyphaseTable(this.design);
    this.halfTaps = this.design.tapsPerPhase / 2;
    const { up, down } = this.design;
    this.stepFrames = Math.floor(down / up);
    this.stepPhase = down % up;
    this.latencyInputFrames = this.halfTaps;
    this.latencyFrames = Math.ceil((this.halfTaps * up) / down);
    this.maxFlushFrames = Math.ceil(((this.halfTaps + 1) * up) / down) + 2;
    // At most 2K-1 frames stay between blocks (see `produce`), plus one block.
    const capacity = this.design.tapsPerPhase - 1 + maxInputFrames;
    this.history = Array.from({ length: channels }, () => new Float64Array(capacity));
    this.reset();
  }

  get totalInputFrames(): number {
    return this.inputTotal;
  }

  get totalOutputFrames(): number {
    return this.outputTotal;
  }

  /** Upper bound of the frames one `process()` call of `inputFrames` writes. */
  maxOutputFrames(inputFrames: number): number {
    return Math.ceil((inputFrames * this.design.up) / this.design.down) + 1;
  }

  reset(): void {
    for (const channel of this.history) channel.fill(0);
    // Frames before the start are silence: K-1 zeros stand for inputs -K+1 ... -1.
    this.historyStart = -(this.halfTaps - 1);
    this.historyFill = this.halfTaps - 1;
    this.nextIndex = 0;
    this.nextPhase = 0;
    this.inputTotal = 0;
    this.outputTotal = 0;
    this.flushed = false;
  }

  /**
   * Takes `frames` (<= maxInputFrames) frames of input, writes the output
   * frames that are now computable at the start of `output` (each channel at
   * least `maxOutputFrames(frames)` long) and returns how many it wrote.
   */
  process(input: Planar, frames: number, output: Planar): number {
    if (this.flushed) throw new Error("resampler was flushed; call reset() before reusing it");
    if (frames > this.maxInputFrames) throw new Error(`block of ${frames} frames exceeds maxInputFrames ${this.maxInputFrames}`);
    if (input.length < this.channels || output.length < this.channels) throw new Error("channel count mismatch");
    for (let ch = 0; ch < this.channels; ch++) this.history[ch].set(input[ch].subarray(0, frames), this.historyFill);
    this.historyFill += frames;
    this.inputTotal += frames;
    return this.produce(output, 0, Number.MAX_SAFE_INTEGER);
  }

  /**
   * Ends the stream: feeds silence and writes the remaining frames (at most
   * `maxFlushFrames`) so that the total output is round(input * up / down).
   */
  flush(output: Planar): number {
    if (this.flushed) return 0;
    this.flushed = true;
    const target = resampledLength(this.inputTotal, this.design.up, this.design.down);
    let written = 0;
    while (this.outputTotal < target) {
      const zeros = Math.min(this.maxInputFrames, this.design.tapsPerPhase);
      for (let ch = 0; ch < this.channels; ch++) this.history[ch].fill(0, this.historyFill, this.historyFill + zeros);
      this.historyFill += zeros;
      written += this.produce(output, written, target - this.outputTotal);
    }
    return written;
  }

  private produce(output: Planar, offset: number, limit: number): number {
    const { table, history, halfTaps, channels } = this;
    const taps = this.design.tapsPerPhase;
    const up = this.design.up;
    const available = this.historyStart + this.historyFill; // one past the last input frame held
    let index = this.nextIndex;
    let phase = this.nextPhase;
    let count = 0;
    while (count < limit && index + halfTaps < available) {
      const base = index - halfTaps + 1 - this.historyStart;
      const coeffBase = phase * taps;
      if (channels === 2) {
        // Both channels in one loop: each coefficient is read once for the two
        // (reads, not multiplies, are what this loop waits on). Per channel the
        // same four sums in the same order as below, so the result is too.
        const x = history[0], y = history[1];
        let acc0 = 0, acc1 = 0, acc2 = 0, acc3 = 0;
        let bcc0 = 0, bcc1 = 0, bcc2 = 0, bcc3 = 0;
        for (let k = 0; k < taps; k += 4) {
          const c = coeffBase + k;
          const i = base + k;
          const h0 = table[c], h1 = table[c + 1], h2 = table[c + 2], h3 = table[c + 3];
          acc0 += h0 * x[i];
          acc1 += h1 * x[i + 1];
          acc2 += h2 * x[i + 2];
          acc3 += h3 * x[i + 3];
          bcc0 += h0 * y[i];
          bcc1 += h1 * y[i + 1];
          bcc2 += h2 * y[i + 2];
          bcc3 += h3 * y[i + 3];
        }
        output[0][offset + count] = acc0 + acc1 + (acc2 + acc3);
        output[1][offset + count] = bcc0 + bcc1 + (bcc2 + bcc3);
      } else for (let ch = 0; ch < channels; ch++) {
        const x = history[ch];
        let acc0 = 0;
        let acc1 = 0;
        let acc2 = 0;
        let acc3 = 0;
        // Four accumulators: shorter dependency chains; the order of the sums
        // is fixed, so the result is the same on every run and block size.
        for (let k = 0; k < taps; k += 4) {
          const c = coeffBase + k;
          const i = base + k;
          acc0 += table[c] * x[i];
          acc1 += table[c + 1] * x[i + 1];
          acc2 += table[c + 2] * x[i + 2];
          acc3 += table[c + 3] * x[i + 3];
        }
        output[ch][offset + count] = acc0 + acc1 + (acc2 + acc3);
      }
      count++;
      index += this.stepFrames;
      phase += this.stepPhase;
      if (phase >= up) {
        phase -= up;
        index++;
      }
    }
    this.nextIndex = index;
    this.nextPhase = phase;
    this.outputTotal += count;
    // Keep only the frames the next output needs (from index-K+1 on).
    const drop = index - halfTaps + 1 - this.historyStart;
    if (drop > 0) {
      const keep = this.historyFill - drop;
      for (let ch = 0; ch < channels; ch++) history[ch].copyWithin(0, drop, this.historyFill);
      this.historyFill = keep;
      this.historyStart += drop;
    }
    return count;
  }
}

/** Converts a whole in-memory signal; the streaming class does the work. */
export function resampleBuffer(input: Planar, frames: number, inputRate: number, outputRate: number, options: ResamplerOptions = {}): Planar {
  const blockFrames = Math.max(1, Math.min(frames, 65536));
  const resampler = new Resampler({ inputRate, outputRate, channels: input.length, maxInputFrames: blockFrames, ...options });
  const { up, down } = resampler.design;
  const outFrames = resampledLength(frames, up, down);
  const result = input.map(() => new Float64Array(outFrames));
  const scratch = input.map(() => new Float64Array(Math.max(resampler.maxOutputFrames(blockFrames), resampler.maxFlushFrames)));
  let written = 0;
  const append = (count: number) => {
    for (let ch = 0; ch < input.length; ch++) result[ch].set(scratch[ch].subarray(0, count), written);
    written += count;
  };
  for (let start = 0; start < frames; start += blockFrames) {
    const n = Math.min(blockFrames, frames - start);
    append(resampler.process(input.map((c) => c.subarray(start, start + n)), n, scratch));
  }
  append(resampler.flush(scratch));
  return result;
}

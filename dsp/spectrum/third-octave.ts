// Long-term average level in third-octave bands, 25 Hz to 20 kHz, streamed
// beside the loudness meter (same blocks, no second read of the file).
//
// Bands: IEC 61260-1:2014, base-ten system. Exact midband frequencies
// f_m = 1000 · 10^(x/10) Hz (x = −16 … 13), band edges f_m · 10^(±1/20);
// the nominal labels are the standard's rounded values (ISO 266 series).
// Each band's level is the power of the FFT bins between its edges (ideal
// rectangular bands, edge bins weighted by their overlap), so no filter
// skirt blurs neighbouring bands.
//
// Level: dB relative to a full-scale sine (AES17: a sine of peak 1.0 reads
// 0 dB), i.e. 10·log10(2 · mean square), averaged over channels.
//
// Cost (the analysis may grow by at most 15 %): two branches.
// - Low bands (25–400 Hz) need fine resolution and every sample (few bins per
//   band, so only long averaging steadies them): the input is decimated to
//   about 3 kHz (a triangular sinc² FIR decimating by D1 ≈ fs/6 kHz at a
//   multiply and two adds per sample, then a 4th-order Butterworth at 520 Hz
//   and ÷2), and every sample goes through Hann-windowed FFTs of about 0.73 Hz
//   bins. The known response of both filters is divided out bin by bin.
// - Bands from 500 Hz hold dozens to thousands of bins each, so a fraction of
//   the time steadies them as well: Hann windows of ~11.7 Hz bins at the full
//   rate, one window in every HIGH_WINDOW_STRIDE (evenly spread through the file).
// Stereo runs as one complex FFT (left real, right imaginary): for real x, y
// and z = x + iy, |Z_k|² + |Z_(N−k)|² = 2(|X_k|² + |Y_k|²), the two channels'
// power without separating them.
// Known limit: a pure tone near multiples of fs/D1 (about 6, 12, 18 kHz)
// folds into the low bands at least 40 dB down (the sinc²'s nulls are narrow).

import { designBiquad } from "../filters/biquad-design.ts";
import { Fft } from "./fft.ts";

export interface ThirdOctaveBand {
  /** Nominal midband frequency (IEC 61260-1 / ISO 266), e.g. 31.5, 1000. */
  centreHz: number;
  /** Long-term average level, dB re a full-scale sine; −Infinity for silence or above Nyquist. */
  levelDb: number;
}

/** Nominal midband frequencies of the bands measured (IEC 61260-1 Annex E, 25 Hz – 20 kHz). */
export const THIRD_OCTAVE_NOMINAL_HZ = [
  25, 31.5, 40, 50, 63, 80, 100, 125, 160, 200, 250, 315, 400, 500, 630, 800, 1000, 1250, 1600, 2000, 2500, 3150, 4000,
  5000, 6300, 8000, 10000, 12500, 16000, 20000,
] as const;
const FIRST_BAND_INDEX = -16; // x of 25 Hz in f_m = 1000 · 10^(x/10)

/** Exact midband frequency of band i of THIRD_OCTAVE_NOMINAL_HZ (base-ten system). */
export const bandMidHz = (i: number): number => 1000 * Math.pow(10, (FIRST_BAND_INDEX + i) / 10);
/** Lower and upper band-edge frequencies: f_m · 10^(∓1/20). */
export const bandEdgesHz = (i: number): [number, number] => {
  const fm = bandMidHz(i);
  return [fm * Math.pow(10, -1 / 20), fm * Math.pow(10, 1 / 20)];
};

const LOW_BAND_COUNT = 13; // 25 … 400 Hz from the decimated branch
const BOX_RATE_HZ = 6000;
const LOW_CUTOFF_HZ = 520;
const BUTTERWORTH4_Q = [0.5411961001461969, 1.3065629648763766]; // 1/(2 cos(π/8)), 1/(2 cos(3π/8))
const LOW_BIN_HZ = 0.73;
const HIGH_BIN_HZ = 11.7;
/** One full-rate window in this many is analysed for the bands from 500 Hz. */
export const HIGH_WINDOW_STRIDE = 8;
// Decimated filter state below this is flushed once per window, so silence never turns subnormal.
const FLUSH_BELOW = 1e-30;

const pow2Near = (x: number) => Math.pow(2, Math.max(2, Math.round(Math.log2(x))));

/** Hann-windowed power spectrum averaged over windows, for one or two channels packed as one complex signal. */
class WindowedPower {
  readonly size: number;
  readonly power: Float64Array; // Σ over windows of |Z_k|² + |Z_(N−k)|², k = 0 … N/2
  windowEnergy = 0; // Σ over windows of Σ w²
  private readonly fft: Fft;
  private readonly hann: Float64Array;
  private readonly hannEnergy: number;
  private readonly re: Float64Array;
  private readonly im: Float64Array;

  constructor(size: number) {
    this.size = size;
    this.fft = new Fft(size);
    this.power = new Float64Array(size / 2 + 1);
    this.hann = new Float64Array(size);
    let e = 0;
    for (let n = 0; n < size; n++) {
      const w = Math.sin((Math.PI * (n + 0.5)) / size) ** 2;
      this.hann[n] = w;
      e += w * w;
    }
    this.hannEnergy = e;
    this.re = new Float64Array(size);
    this.im = new Float64Array(size);
  }

  /** Adds one window of `frames` samples (≤ size; a shorter tail gets a Hann of its own length, zero-padded). */
  add(x: Float64Array, y: Float64Array | null, frames: number, into = this.power): number {
    const { re, im, size } = this;
    let energy: number;
    if (frames === size) {
      const w = this.hann;
      for (let n = 0; n < size; n++) re[n] = w[n] * x[n];
      if (y) for (let n = 0; n < size; n++) im[n] = w[n] * y[n];
      else im.fill(0);
      energy = this.hannEnergy;
    } else {
      energy = 0;
      re.fill(0);
      im.fill(0);
      for (let n = 0; n < frames; n++) {
        const w = Math.sin((Math.PI * (n + 0.5)) / frames) ** 2;
        re[n] = w * x[n];
        if (y) im[n] = w * y[n];
        energy += w * w;
      }
    }
    this.fft.transform(re, im);
    into[0] += 2 * (re[0] * re[0] + im[0] * im[0]);
    for (let k = 1, j = size - 1; k <= size / 2; k++, j--) {
      into[k] += re[k] * re[k] + im[k] * im[k] + re[j] * re[j] + im[j] * im[j];
    }
    return energy;
  }
}

export class ThirdOctaveAnalyzer {
  readonly sampleRate: number;
  readonly channels: number;
  // Low branch
  private readonly boxFrames: number; // D1
  private readonly lowRateHz: number; // fs / D1 / 2
  private readonly lowCoeffs: Float64Array; // two sections: b0 b1 b2 a1 a2
  private readonly lowState: Float64Array; // per channel, per section: s1 s2
  private readonly boxSums: Float64Array; // per channel: A (Σx), C (Σ m·x) of the block so far, unused, C of the previous block
  private boxFill = 0; // frames of the current block summed so far
  private decimatePhase = 0;
  private readonly low: WindowedPower;
  private readonly lowBuf: Float64Array[];
  private lowFill = 0;
  // High branch
  private readonly high: WindowedPower;
  private readonly highBuf: Float64Array[];
  private highFill = 0;
  private highWindow = 0; // index of the full-rate window being filled

  constructor(sampleRate: number, channels: number) {
    if (!(channels === 1 || channels === 2)) throw new RangeError(`the spectrum takes 1 or 2 channels, got ${channels}`);
    this.sampleRate = sampleRate;
    this.channels = channels;
    this.boxFrames = Math.max(1, Math.round(sampleRate / BOX_RATE_HZ));
    const boxRateHz = sampleRate / this.boxFrames;
    if (LOW_CUTOFF_HZ >= boxRateHz / 2) throw new RangeError(`sample rate ${sampleRate} Hz is too low for the spectrum`);
    this.lowRateHz = boxRateHz / 2;
    this.lowCoeffs = new Float64Array(10);
    BUTTERWORTH4_Q.forEach((q, s) => {
      const c = designBiquad("lowPass", { freqHz: LOW_CUTOFF_HZ, q }, boxRateHz);
      this.lowCoeffs.set([c.b0, c.b1, c.b2, c.a1, c.a2], 5 * s);
    });
    this.lowState = new Float64Array(4 * channels);
    this.boxSums = new Float64Array(4 * channels);
    this.low = new WindowedPower(pow2Near(this.lowRateHz / LOW_BIN_HZ));
    this.lowBuf = Array.from({ length: channels }, () => new Float64Array(this.low.size));
    this.high = new WindowedPower(pow2Near(sampleRate / HIGH_BIN_HZ));
    this.highBuf = Array.from({ length: channels }, () => new Float64Array(this.high.size));
  }

  reset(): void {
    this.lowState.fill(0);
    this.boxSums.fill(0);
    this.boxFill = this.decimatePhase = this.lowFill = this.highFill = this.highWindow = 0;
    this.low.power.fill(0);
    this.high.power.fill(0);
    this.low.windowEnergy = this.high.windowEnergy = 0;
  }

  /** Measures `frames` frames of `input` (not modified). */
  process(input: Float64Array[], frames: number): void {
    this.processHigh(input, frames);
    this.processLow(input, frames);
  }

  private processHigh(input: Float64Array[], frames: number): void {
    const size = this.high.size;
    let pos = 0;
    while (pos < frames) {
      const n = Math.min(frames - pos, size - this.highFill);
      // Only the analysed windows are copied: the others cost nothing.
      if (this.highWindow % HIGH_WINDOW_STRIDE === 0) {
        for (let ch = 0; ch < this.channels; ch++) this.highBuf[ch].set(input[ch].subarray(pos, pos + n), this.highFill);
      }
      this.highFill += n;
      pos += n;
      if (this.highFill === size) {
        if (this.highWindow % HIGH_WINDOW_STRIDE === 0) {
          this.high.windowEnergy += this.high.add(this.highBuf[0], this.channels === 2 ? this.highBuf[1] : null, size);
        }
        this.highFill = 0;
        this.highWindow++;
      }
    }
  }

  // Triangular FIR of length 2·D1 − 1 decimating by D1 (a box of D1 twice:
  // sinc²): with A = Σ x and C = Σ m·x over a block (m = 0 … D1−1), the output
  // after block j is D1·A_j − C_j + C_(j−1): weights rising 0 … D1−1 over the
  // previous block and falling D1 … 1 over this one (sum D1²).
  private processLow(input: Float64Array[], frames: number): void {
    const d = this.boxFrames;
    const norm = 1 / (d * d);
    const sums = this.boxSums;
    let pos = 0;
    while (pos < frames) {
      const n = Math.min(frames - pos, d - this.boxFill);
      for (let ch = 0; ch < this.channels; ch++) {
        const x = input[ch];
        let a = sums[4 * ch], c = sums[4 * ch + 1];
        for (let i = 0, m = this.boxFill; i < n; i++, m++) {
          const v = x[pos + i];
          a += v;
          c += m * v;
        }
        sums[4 * ch] = a;
        sums[4 * ch + 1] = c;
      }
      this.boxFill += n;
      pos += n;
      if (this.boxFill === d) {
        this.boxFill = 0;
        this.decimatedSample(norm, d);
      }
    }
  }

  private decimatedSample(norm: number, d: number): void {
    const sums = this.boxSums, k = this.lowCoeffs, st = this.lowState;
    const keep = this.decimatePhase === 0;
    for (let ch = 0; ch < this.channels; ch++) {
      const o = 4 * ch;
      const a = sums[o], c = sums[o + 1];
      const v = (d * a - c + sums[o + 3]) * norm;
      sums[o + 3] = c;
      sums[o] = sums[o + 1] = 0;
      // Two lowpass sections, transposed direct form II.
      const y = k[0] * v + st[o];
      st[o] = k[1] * v - k[3] * y + st[o + 1];
      st[o + 1] = k[2] * v - k[4] * y;
      const z = k[5] * y + st[o + 2];
      st[o + 2] = k[6] * y - k[8] * z + st[o + 3];
      st[o + 3] = k[7] * y - k[9] * z;
      if (keep) this.lowBuf[ch][this.lowFill] = z;
    }
    this.decimatePhase ^= 1;
    if (keep && ++this.lowFill === this.low.size) {
      this.low.windowEnergy += this.low.add(this.lowBuf[0], this.channels === 2 ? this.lowBuf[1] : null, this.low.size);
      this.lowFill = 0;
      for (let i = 0; i < st.length; i++) if (Math.abs(st[i]) < FLUSH_BELOW) st[i] = 0;
    }
  }

  /** Band levels so far (the partly filled last windows included); the analyser keeps running. */
  result(): ThirdOctaveBand[] {
    const low = this.finish(this.low, this.lowBuf, this.lowFill, true);
    const high = this.finish(this.high, this.highBuf, this.highFill, this.highWindow % HIGH_WINDOW_STRIDE === 0);
    const lowBinHz = this.lowRateHz / this.low.size;
    const highBinHz = this.sampleRate / this.high.size;
    const d = this.boxFrames;
    const lowCorrection = (fHz: number): number => {
      // |H|² of the sinc² decimator and the two lowpass sections at fHz, divided out.
      const u = (Math.PI * fHz) / this.sampleRate;
      const sinc = d === 1 || u === 0 ? 1 : Math.sin(d * u) / (d * Math.sin(u));
      let h2 = sinc ** 4;
      const w = (2 * Math.PI * fHz) / (this.sampleRate / d);
      for (let s = 0; s < 2; s++) h2 *= biquadPowerGain(this.lowCoeffs.subarray(5 * s, 5 * s + 5), w);
      return 1 / h2;
    };
    return THIRD_OCTAVE_NOMINAL_HZ.map((centreHz, i) => {
      const [loHz, hiHz] = bandEdgesHz(i);
      const isLow = i < LOW_BAND_COUNT;
      const { power, energy, size } = isLow ? low : high;
      const binHz = isLow ? lowBinHz : highBinHz;
      const nyquistHz = isLow ? this.lowRateHz / 2 : this.sampleRate / 2;
      if (energy === 0 || loHz >= nyquistHz) return { centreHz, levelDb: -Infinity };
      let sum = 0;
      const first = Math.max(0, Math.floor(loHz / binHz - 0.5));
      const last = Math.min(size / 2, Math.ceil(hiHz / binHz + 0.5));
      for (let k = first; k <= last; k++) {
        // Bin k covers (k ± ½)·binHz; weight it by its overlap with the band.
        const overlap = Math.min(hiHz, (k + 0.5) * binHz) - Math.max(loHz, (k - 0.5) * binHz);
        if (overlap <= 0) continue;
        const p = power[k] * (overlap / binHz);
        sum += isLow ? p * lowCorrection(k * binHz) : p;
      }
      // Parseval: Σ_k |X_k|² = N · Σ (w x)²; power[] holds both halves of the spectrum.
      const meanSquare = sum / (size * energy * this.channels);
      return { centreHz, levelDb: 10 * Math.log10(2 * meanSquare) };
    });
  }

  private finish(
    branch: WindowedPower,
    bufs: Float64Array[],
    fill: number,
    analysed: boolean,
  ): { power: Float64Array; energy: number; size: number } {
    if (fill === 0 || !analysed) return { power: branch.power, energy: branch.windowEnergy, size: branch.size };
    const power = branch.power.slice();
    const energy = branch.windowEnergy + branch.add(bufs[0], this.channels === 2 ? bufs[1] : null, fill, power);
    return { power, energy, size: branch.size };
  }
}

/** |H(e^{jw})|² of one biquad (b0 b1 b2 a1 a2). */
function biquadPowerGain(c: Float64Array, w: number): number {
  const c1 = Math.cos(w), s1 = Math.sin(w), c2 = Math.cos(2 * w), s2 = Math.sin(2 * w);
  const nr = c[0] + c[1] * c1 + c[2] * c2, ni = -(c[1] * s1 + c[2] * s2);
  const dr = 1 + c[3] * c1 + c[4] * c2, di = -(c[3] * s1 + c[4] * s2);
  return (nr * nr + ni * ni) / (dr * dr + di * di);
}

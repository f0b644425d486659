// Test signals and measurements shared by the resonance and tape tests:
// seeded Gaussian and pink noise, tone levels by a windowed DFT bin, and
// third-octave band levels (IEC 61260-1 base-2 band edges fm·2^(±1/6),
// summed from an FFT power spectrum).

import FFT from "fft.js";
import { Prng } from "./output/prng.ts";

/** Seeded standard normal values (Box–Muller). */
export function gaussian(seed: number): () => number {
  const rnd = new Prng(seed);
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const u = 1 - rnd.next(), v = rnd.next();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

/**
 * Pink (1/f) noise at an RMS level in dBFS: white Gaussian noise through
 * Paul Kellett's refined pinking filter (seven one-poles; within ±0.05 dB of
 * −3 dB/octave above 10 Hz at 44.1 kHz; music-dsp archive, from memory).
 */
export function pinkNoise(frames: number, seed: number, rmsDb: number): Float64Array {
  const g = gaussian(seed);
  const out = new Float64Array(frames);
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, b4 = 0, b5 = 0, b6 = 0;
  for (let i = 0; i < frames; i++) {
    const w = g();
    b0 = 0.99886 * b0 + w * 0.0555179;
    b1 = 0.99332 * b1 + w * 0.0750759;
    b2 = 0.969 * b2 + w * 0.153852;
    b3 = 0.8665 * b3 + w * 0.3104856;
    b4 = 0.55 * b4 + w * 0.5329522;
    b5 = -0.7616 * b5 - w * 0.016898;
    out[i] = b0 + b1 + b2 + b3 + b4 + b5 + b6 + w * 0.5362;
    b6 = w * 0.115926;
  }
  let s = 0;
  for (let i = 0; i < frames; i++) s += out[i] * out[i];
  const k = 10 ** (rmsDb / 20) / Math.sqrt(s / frames);
  for (let i = 0; i < frames; i++) out[i] *= k;
  return out;
}

export function rmsDb(x: Float64Array, from = 0, to = x.length): number {
  let s = 0;
  for (let i = from; i < to; i++) s += x[i] * x[i];
  return 10 * Math.log10(s / (to - from));
}

/** Amplitude (dB re 1) of one frequency: Hann-windowed DFT at that frequency. */
export function toneDb(x: Float64Array, from: number, n: number, freqHz: number, sampleRate: number): number {
  let re = 0, im = 0, wsum = 0;
  for (let i = 0; i < n; i++) {
    const w = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
    const ph = (2 * Math.PI * freqHz * i) / sampleRate;
    re += w * x[from + i] * Math.cos(ph);
    im += w * x[from + i] * Math.sin(ph);
    wsum += w;
  }
  return 20 * Math.log10((2 * Math.hypot(re, im)) / wsum);
}

/** IEC 61260-1 third-octave mid-band frequencies (exact base-2: 1000·2^(n/3)) from about 25 Hz to 20 kHz. */
export const THIRD_OCTAVES_HZ = Array.from({ length: 30 }, (_, i) => 1000 * 2 ** ((i - 16) / 3));

/**
 * Third-octave band levels (dB) of x[from, to): averaged power spectra of
 * Hann-windowed 8192-frame segments (half overlap), summed per band.
 */
export function thirdOctaveLevelsDb(x: Float64Array, sampleRate: number, from = 0, to = x.length, centresHz: readonly number[] = THIRD_OCTAVES_HZ): number[] {
  const n = 8192;
  const fft = new FFT(n);
  const frame = new Float64Array(n);
  const spec = new Float64Array(2 * n);
  const power = new Float64Array(n / 2 + 1);
  for (let start = from; start + n <= to; start += n / 2) {
    for (let i = 0; i < n; i++) frame[i] = x[start + i] * (0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n));
    fft.realTransform(spec, frame);
    for (let k = 0; k <= n / 2; k++) power[k] += spec[2 * k] ** 2 + spec[2 * k + 1] ** 2;
  }
  const binHz = sampleRate / n;
  return centresHz.map((fm) => {
    const lo = fm * 2 ** (-1 / 6), hi = fm * 2 ** (1 / 6);
    let s = 0;
    for (let k = Math.ceil(lo / binHz); k <= Math.min(n / 2, Math.floor(hi / binHz)); k++) s += power[k];
    return 10 * Math.log10(s + 1e-300);
  });
}

/** Runs a processor over planar audio in blocks of `block` frames (in place on copies). */
export function runBlocks(proc: { process(c: Float64Array[], n: number): void }, x: Float64Array[], block: number): Float64Array[] {
  const y = x.map((c) => c.slice());
  for (let off = 0; off < y[0].length; off += block) {
    const n = Math.min(block, y[0].length - off);
    proc.process(y.map((c) => c.subarray(off, off + n)), n);
  }
  return y;
}

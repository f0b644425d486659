// Deterministic test signals shared by tests and benchmarks: a seeded PRNG
// (mulberry32), white noise, sines and level steps. Levels in dBFS, where a
// sine of amplitude 1.0 is 0 dBFS.

import { dbToLinear } from "../dsp/units.ts";

/** Small seeded PRNG (mulberry32); returns uniform numbers in [0, 1). */
export function createRng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal numbers from the same PRNG (Box–Muller). */
export function createGaussian(seed: number): () => number {
  const rng = createRng(seed);
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const v = spare;
      spare = null;
      return v;
    }
    let u = 0;
    while (u === 0) u = rng();
    const v = rng();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

/** Uniform white noise in [-peak, peak). */
export function whiteNoise(frames: number, seed: number, peak = 1): Float64Array {
  const rng = createRng(seed);
  const out = new Float64Array(frames);
  for (let i = 0; i < frames; i++) out[i] = (2 * rng() - 1) * peak;
  return out;
}

/** Sine of the given peak level (dBFS); phase in radians at frame 0. */
export function sine(frames: number, freqHz: number, sampleRate: number, levelDb: number, phaseRad = 0): Float64Array {
  const amp = dbToLinear(levelDb);
  const w = (2 * Math.PI * freqHz) / sampleRate;
  const out = new Float64Array(frames);
  for (let i = 0; i < frames; i++) out[i] = amp * Math.sin(w * i + phaseRad);
  return out;
}

/** Sine segments one after the other: [durationS, levelDb] pairs, continuous phase. */
export function steppedSine(
  segments: Array<[durationS: number, levelDb: number]>,
  freqHz: number,
  sampleRate: number,
): Float64Array {
  const total = segments.reduce((n, [d]) => n + Math.round(d * sampleRate), 0);
  const out = new Float64Array(total);
  const w = (2 * Math.PI * freqHz) / sampleRate;
  let i = 0;
  for (const [durationS, levelDb] of segments) {
    const amp = dbToLinear(levelDb);
    const end = i + Math.round(durationS * sampleRate);
    for (; i < end; i++) out[i] = amp * Math.sin(w * i);
  }
  return out;
}

/** Pink-ish music stand-in: noise through a gentle one-pole tilt plus two tones, peak-normalised. */
export function mixedSignal(frames: number, sampleRate: number, seed: number, peakDb = -1): Float64Array {
  const rng = createRng(seed);
  const out = new Float64Array(frames);
  let lp = 0;
  let peak = 0;
  for (let i = 0; i < frames; i++) {
    lp = 0.97 * lp + 0.03 * (2 * rng() - 1);
    const t = i / sampleRate;
    const env = 0.6 + 0.4 * Math.sin(2 * Math.PI * 0.5 * t);
    const v = env * (4 * lp + 0.3 * Math.sin(2 * Math.PI * 110 * t) + 0.1 * Math.sin(2 * Math.PI * 3520 * t));
    out[i] = v;
    if (Math.abs(v) > peak) peak = Math.abs(v);
  }
  const g = dbToLinear(peakDb) / peak;
  for (let i = 0; i < frames; i++) out[i] *= g;
  return out;
}

/** Splits planar channels into successive blocks of `blockFrames` (copies; tests only). */
export function* blocksOf(channels: Float64Array[], blockFrames: number): Generator<[Float64Array[], number]> {
  const frames = channels[0].length;
  const bufs = channels.map(() => new Float64Array(blockFrames));
  for (let start = 0; start < frames; start += blockFrames) {
    const n = Math.min(blockFrames, frames - start);
    for (let ch = 0; ch < channels.length; ch++) bufs[ch].set(channels[ch].subarray(start, start + n));
    yield [bufs, n];
  }
}

/** Raised-cosine fade-in and fade-out over `fadeFrames`, in place (avoids onset overshoot in tests). */
export function fade(x: Float64Array, fadeFrames: number): Float64Array {
  const n = Math.min(fadeFrames, Math.floor(x.length / 2));
  for (let i = 0; i < n; i++) {
    const g = 0.5 - 0.5 * Math.cos((Math.PI * i) / n);
    x[i] *= g;
    x[x.length - 1 - i] *= g;
  }
  return x;
}

/**
 * Pink noise (−3 dB per octave) from seeded Gaussian white noise through
 * Paul Kellet's "refined" filter (music-dsp archive; from memory: within
 * ±0.05 dB of 1/f above 9.2 Hz, designed for 44.1 kHz). RMS about 0.11 · scale.
 */
export function pinkNoise(frames: number, seed: number, scale = 1): Float64Array {
  const g = createGaussian(seed);
  const out = new Float64Array(frames);
  let b0 = 0, b1 = 0, b2 = 0, b3 = 0, b4 = 0, b5 = 0, b6 = 0;
  for (let i = 0; i < frames; i++) {
    const white = g() * 0.05;
    b0 = 0.99886 * b0 + white * 0.0555179;
    b1 = 0.99332 * b1 + white * 0.0750759;
    b2 = 0.969 * b2 + white * 0.153852;
    b3 = 0.8665 * b3 + white * 0.3104856;
    b4 = 0.55 * b4 + white * 0.5329522;
    b5 = -0.7616 * b5 - white * 0.016898;
    out[i] = (b0 + b1 + b2 + b3 + b4 + b5 + b6 + white * 0.5362) * scale;
    b6 = white * 0.115926;
  }
  return out;
}

/**
 * Linear-phase low-pass (Kaiser-windowed sinc, 257 taps, β 8, cutoff
 * 0.44·fs): flat to about 0.43·fs and about 80 dB down from 0.45·fs, as a
 * converter's decimation filter leaves recorded sound. Zero-padded edges.
 */
export function bandLimited(x: Float64Array, cutoff = 0.44): Float64Array {
  const half = 128, beta = 8;
  const i0 = (v: number) => {
    let s = 1, t = 1;
    for (let k = 1; k < 60; k++) {
      t *= (v / (2 * k)) ** 2;
      s += t;
    }
    return s;
  };
  const h = new Float64Array(2 * half + 1);
  let sum = 0;
  for (let n = -half; n <= half; n++) {
    const s = n === 0 ? 2 * cutoff : Math.sin(2 * Math.PI * cutoff * n) / (Math.PI * n);
    const r = n / (half + 1);
    sum += h[n + half] = (s * i0(beta * Math.sqrt(1 - r * r))) / i0(beta);
  }
  const y = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    let acc = 0;
    const lo = Math.max(-half, i - x.length + 1), hi = Math.min(half, i);
    for (let k = lo; k <= hi; k++) acc += h[k + half] * x[i - k];
    y[i] = acc / sum;
  }
  return y;
}

// Deterministic test signals shared by tests and benchmarks: a seeded
// generator, white noise, sines and level steps. Levels in dBFS, where a
// sine of amplitude 1.0 is 0 dBFS.

import { dbToLinear } from "../units.ts";
import { Prng } from "../output/prng.ts";

/**
 * Uniform numbers in [0, 1) from a seed: the product's own generator
 * (xoshiro128**, dsp/output/prng.ts, which also draws the dither), the one
 * seeded generator of the tests, the bench and the demo seeds.
 */
export function createRng(seed: number): () => number {
  const prng = new Prng(seed);
  return () => prng.next();
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

// Shared by the desk's tests: a test chain with every stage type, a
// music-like seeded signal, and the renderer's processing of a stretch
// (buildChain in 10 ms chunks, latency compensated as render-file does).

import { buildChain } from "../chain/build-chain.ts";
import { parseChain, type Chain, type ChainInput } from "../chain/schema.ts";
import { Prng } from "../output/prng.ts";

export const EVERY_STAGE: ChainInput = {
  stages: [
    { type: "trim", gainDb: -1 },
    { type: "eq", bands: [
      { shape: "highPass", freqHz: 30, gainDb: 0, q: 0.707 },
      { shape: "peak", freqHz: 1000, gainDb: 2, q: 1 },
      { shape: "highShelf", freqHz: 8000, gainDb: 1.5, q: 0.7, channel: "side" },
    ] },
    { type: "saturate", driveDb: 6, blend: 0.4, oversample: 4 },
    { type: "compress", thresholdDb: -24, ratio: 2.5, kneeDb: 6, attackMs: 20, releaseMs: "auto", makeupDb: 2, rmsWindowMs: 10, sidechainHighPassHz: 80 },
    { type: "multiband", crossoversHz: [120, 1500, 6000], bands: [0, 1, 2, 3].map((b) => ({ thresholdDb: -28 + b, ratio: 2, kneeDb: 6, attackMs: 15, releaseMs: 120, makeupDb: 0.5, rmsWindowMs: 15 })) },
    { type: "limit", inputGainDb: 6, ceilingDbtp: -1, lookaheadMs: 2, releaseMs: 80, truePeak: true },
  ],
  output: { bitDepth: "32f", dither: "none" },
};

export function chainOf(input: ChainInput): Chain {
  const r = parseChain(input);
  if (!r.ok) throw new Error(JSON.stringify(r.errors));
  return r.chain;
}

/** Seeded stereo "music": two tones, a decaying beat, filtered noise; values on the 24-bit grid. */
export function musicLike(seconds: number, sampleRate: number, seed = 7): Float32Array[] {
  const n = Math.round(seconds * sampleRate);
  const l = new Float32Array(n), r = new Float32Array(n);
  const rnd = new Prng(seed);
  let lp = 0;
  for (let i = 0; i < n; i++) {
    const t = i / sampleRate;
    const beat = Math.exp(-((t * 2) % 1) * 8);
    lp += 0.05 * (rnd.next() * 2 - 1 - lp);
    const s = 0.3 * Math.sin(2 * Math.PI * 110 * t) * beat + 0.15 * Math.sin(2 * Math.PI * 1320 * t) + 0.4 * lp;
    const d = 0.05 * Math.sin(2 * Math.PI * 3300 * t);
    l[i] = Math.round((s + d) * 8388608) / 8388608;
    r[i] = Math.round((s - d) * 8388608) / 8388608;
  }
  return [l, r];
}

/**
 * The renderer's output for `audio` frames [from, to) (processing starts at
 * `from`), as render-file computes it: chunks of 10 ms, L zeros fed after
 * the end, the first L output frames dropped.
 */
export function renderStretch(chain: Chain, audio: Float32Array[], sampleRate: number, from: number, to: number): Float64Array[] {
  const nch = audio.length;
  const grid = Math.round(0.01 * sampleRate);
  const built = buildChain(chain, sampleRate, nch, grid);
  const L = built.latencyFrames, total = to - from;
  const out = Array.from({ length: nch }, () => new Float64Array(total));
  const buf = Array.from({ length: nch }, () => new Float64Array(grid));
  let written = 0, drop = L;
  for (let pos = 0; pos < total + L; pos += grid) {
    const n = Math.min(grid, total + L - pos);
    for (let c = 0; c < nch; c++) for (let i = 0; i < n; i++) buf[c][i] = pos + i < total ? audio[c][from + pos + i] : 0;
    const view = n === grid ? buf : buf.map((b) => b.subarray(0, n));
    for (const s of built.stages) s.processor.process(view, n);
    let k = 0;
    if (drop > 0) {
      k = Math.min(n, drop);
      drop -= k;
    }
    for (; k < n && written < total; k++, written++) for (let c = 0; c < nch; c++) out[c][written] = view[c][k];
  }
  return out;
}

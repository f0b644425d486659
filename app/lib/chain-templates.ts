// The studio templates every new studio (and the demo) starts with, in our
// own words. Values are starting points a mastering engineer would adjust by
// ear (common practice: gentle ratios below 2:1 on a full mix, a true-peak
// ceiling of -1 dBTP for lossy delivery headroom).
import type { ChainInput } from "../../dsp/chain/schema.ts";

export type ChainTemplate = { name: string; params: ChainInput };

/** A blank chain: no stages, default output settings. */
export const EMPTY_CHAIN: ChainInput = { stages: [], output: { bitDepth: 24, dither: "tpdf" } };

export const CHAIN_TEMPLATES: readonly ChainTemplate[] = [
  // Four bands at 90 Hz, 1 kHz and 3 kHz, ratios 1.2–1.6, bus compressor on auto release, limiter at -1 dBTP.
  // examples/gentle-master.json is a copy for the command line (a test keeps them equal).
  {
    name: "Gentle master",
    params: {
      stages: [
        { type: "eq", bands: [
          { shape: "highPass", freqHz: 25, gainDb: 0, q: 0.707, channel: "stereo" },
          { shape: "peak", freqHz: 320, gainDb: -0.8, q: 1.2, channel: "mid" },
          { shape: "highShelf", freqHz: 9000, gainDb: 0.6, q: 0.7, channel: "side" },
        ] },
        { type: "compress", thresholdDb: -22, ratio: 1.8, kneeDb: 8, attackMs: 30, releaseMs: "auto", makeupDb: 1, rmsWindowMs: 30, sidechainHighPassHz: 90 },
        { type: "multiband", crossoversHz: [90, 1000, 3000], bands: [
          { thresholdDb: -21, ratio: 1.5, kneeDb: 8, attackMs: 40, releaseMs: 250, makeupDb: 0, rmsWindowMs: 40 },
          { thresholdDb: -22, ratio: 1.2, kneeDb: 8, attackMs: 25, releaseMs: "auto", makeupDb: 0, rmsWindowMs: 30 },
          { thresholdDb: -26, ratio: 1.4, kneeDb: 8, attackMs: 12, releaseMs: 150, makeupDb: 0, rmsWindowMs: 20 },
          { thresholdDb: -27, ratio: 1.6, kneeDb: 8, attackMs: 6, releaseMs: 100, makeupDb: 0, rmsWindowMs: 10 },
        ] },
        { type: "limit", inputGainDb: 2, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 120, truePeak: true },
      ],
      output: { bitDepth: 24, dither: "tpdf" },
    },
  },
  {
    name: "Hot and dense",
    params: {
      stages: [
        { type: "eq", bands: [
          { shape: "highPass", freqHz: 30, gainDb: 0, q: 0.707, channel: "stereo" },
          { shape: "lowShelf", freqHz: 110, gainDb: 0.8, q: 0.7, channel: "mid" },
          { shape: "highShelf", freqHz: 10000, gainDb: 1.2, q: 0.7, channel: "stereo" },
        ] },
        { type: "saturate", driveDb: 3, blend: 0.3, oversample: 4 },
        { type: "compress", thresholdDb: -18, ratio: 2.5, kneeDb: 6, attackMs: 15, releaseMs: "auto", makeupDb: 1.5, rmsWindowMs: 20, sidechainHighPassHz: 80 },
        { type: "limit", inputGainDb: 4, ceilingDbtp: -1, lookaheadMs: 2, releaseMs: 80, truePeak: true },
      ],
      output: { bitDepth: 24, dither: "tpdf", targetLufs: -9 },
    },
  },
  {
    name: "Quiet reference",
    params: {
      stages: [
        { type: "trim", gainDb: 0 },
        { type: "eq", bands: [{ shape: "highPass", freqHz: 20, gainDb: 0, q: 0.707, channel: "stereo" }] },
        { type: "limit", inputGainDb: 0, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 150, truePeak: true },
      ],
      // About -14 LUFS, the quieter reference (common practice), with lossy-delivery headroom.
      output: { bitDepth: 24, dither: "tpdf", targetLufs: -14 },
    },
  },
];

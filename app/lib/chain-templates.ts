// The studio templates every new studio (and the demo) starts with, in our
// own words. Values are starting points a mastering engineer would adjust by
// ear (common practice: gentle ratios below 2:1 on a full mix, a true-peak
// ceiling of -1 dBTP for lossy delivery headroom).
import gentleMaster from "../../examples/gentle-master.json";
import type { ChainInput } from "../../dsp/chain/schema.ts";

export type ChainTemplate = { name: string; params: ChainInput };

/** A blank chain: no stages, default output settings. */
export const EMPTY_CHAIN: ChainInput = { stages: [], output: { bitDepth: 24, dither: "tpdf" } };

export const CHAIN_TEMPLATES: readonly ChainTemplate[] = [
  // Four bands at 90 Hz, 1 kHz and 3 kHz, ratios 1.2–1.6, bus compressor on auto release, limiter at -1 dBTP.
  { name: "Gentle master", params: gentleMaster as ChainInput },
  {
    name: "Open and loud",
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
  {
    // Weight in the low end from the tape stage, lightly driven and half blended; the resonance
    // stage only shaves narrow build-ups between 1.5 and 7 kHz by at most 3 dB; a gentle bus
    // compressor and the limiter at -1 dBTP.
    name: "Warm and even",
    params: {
      stages: [
        { type: "eq", bands: [{ shape: "highPass", freqHz: 25, gainDb: 0, q: 0.707, channel: "stereo" }] },
        { type: "tape", driveDb: 3, bumpHz: 65, bumpDb: 1.5, rolloffHz: 19000, blend: 0.6, oversample: 4 },
        { type: "resonance", lowHz: 1500, highHz: 7000, thresholdDb: 6, maxCutDb: 3, attackMs: 20, releaseMs: 180, blend: 1, listen: "output" },
        { type: "compress", thresholdDb: -20, ratio: 1.5, kneeDb: 8, attackMs: 30, releaseMs: "auto", makeupDb: 0.5, rmsWindowMs: 20, sidechainHighPassHz: 80 },
        { type: "limit", inputGainDb: 2, ceilingDbtp: -1, lookaheadMs: 3, releaseMs: 120, truePeak: true },
      ],
      output: { bitDepth: 24, dither: "tpdf", targetLufs: -14 },
    },
  },
];

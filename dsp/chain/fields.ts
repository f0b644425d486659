// Ranges, steps, units and defaults of every numeric chain field: the one
// source for the zod schema (schema.ts) and the web chain editor's labelled
// number fields.

export interface FieldRange {
  min: number;
  max: number;
  step: number;
  unit: "dB" | "dBTP" | "LUFS" | "ms" | "Hz" | ":1" | "" ;
  /** Default when the field is omitted; absent = required (or optional without default). */
  default?: number;
  label: string;
}

export const COMPRESS_FIELDS = {
  thresholdDb: { min: -60, max: 0, step: 0.5, unit: "dB", default: -18, label: "Threshold" },
  ratio: { min: 1, max: 20, step: 0.1, unit: ":1", default: 2, label: "Ratio" },
  kneeDb: { min: 0, max: 24, step: 0.5, unit: "dB", default: 6, label: "Knee" },
  attackMs: { min: 0.1, max: 300, step: 0.1, unit: "ms", default: 20, label: "Attack" },
  /** Besides a number, "auto" (program-dependent release). */
  releaseMs: { min: 5, max: 3000, step: 1, unit: "ms", label: "Release" },
  makeupDb: { min: -24, max: 24, step: 0.1, unit: "dB", default: 0, label: "Makeup" },
  rmsWindowMs: { min: 1, max: 300, step: 1, unit: "ms", default: 20, label: "RMS window" },
  sidechainHighPassHz: { min: 10, max: 500, step: 1, unit: "Hz", label: "Sidechain high-pass" },
} as const satisfies Record<string, FieldRange>;

export const TRIM_FIELDS = {
  gainDb: { min: -24, max: 24, step: 0.1, unit: "dB", default: 0, label: "Gain" },
} as const satisfies Record<string, FieldRange>;

export const EQ_BAND_FIELDS = {
  freqHz: { min: 10, max: 24000, step: 1, unit: "Hz", label: "Frequency" },
  gainDb: { min: -24, max: 24, step: 0.1, unit: "dB", default: 0, label: "Gain" },
  q: { min: 0.1, max: 20, step: 0.01, unit: "", default: 0.707, label: "Q" },
} as const satisfies Record<string, FieldRange>;

export const SATURATE_FIELDS = {
  driveDb: { min: 0, max: 24, step: 0.5, unit: "dB", default: 6, label: "Drive" },
  blend: { min: 0, max: 1, step: 0.01, unit: "", default: 0.5, label: "Blend" },
} as const satisfies Record<string, FieldRange>;

export const RESONANCE_FIELDS = {
  lowHz: { min: 100, max: 16000, step: 1, unit: "Hz", default: 1000, label: "Focus from" },
  highHz: { min: 500, max: 20000, step: 1, unit: "Hz", default: 8000, label: "Focus to" },
  thresholdDb: { min: 0, max: 24, step: 0.5, unit: "dB", default: 6, label: "Peak threshold" },
  maxCutDb: { min: 0, max: 24, step: 0.5, unit: "dB", default: 4, label: "Deepest cut" },
  attackMs: { min: 1, max: 300, step: 1, unit: "ms", default: 20, label: "Attack" },
  releaseMs: { min: 10, max: 3000, step: 1, unit: "ms", default: 150, label: "Release" },
  blend: { min: 0, max: 1, step: 0.01, unit: "", default: 1, label: "Blend" },
} as const satisfies Record<string, FieldRange>;

export const TAPE_FIELDS = {
  driveDb: { min: 0, max: 24, step: 0.5, unit: "dB", default: 4, label: "Drive" },
  bumpHz: { min: 30, max: 200, step: 1, unit: "Hz", default: 70, label: "Bump frequency" },
  bumpDb: { min: 0, max: 6, step: 0.1, unit: "dB", default: 1.5, label: "Bump" },
  /** Besides a number, null (no high-frequency loss). */
  rolloffHz: { min: 8000, max: 22000, step: 10, unit: "Hz", default: 18000, label: "High-frequency loss" },
  blend: { min: 0, max: 1, step: 0.01, unit: "", default: 1, label: "Blend" },
} as const satisfies Record<string, FieldRange>;

export const MULTIBAND_FIELDS = {
  crossoverHz: { min: 20, max: 20000, step: 1, unit: "Hz", label: "Crossover" },
} as const satisfies Record<string, FieldRange>;

export const LIMIT_FIELDS = {
  inputGainDb: { min: -24, max: 24, step: 0.1, unit: "dB", default: 0, label: "Input gain" },
  ceilingDbtp: { min: -12, max: 0, step: 0.1, unit: "dBTP", default: -1, label: "Ceiling" },
  lookaheadMs: { min: 0.5, max: 20, step: 0.1, unit: "ms", default: 3, label: "Lookahead" },
  releaseMs: { min: 1, max: 1000, step: 1, unit: "ms", default: 100, label: "Release" },
} as const satisfies Record<string, FieldRange>;

export const OUTPUT_FIELDS = {
  targetLufs: { min: -40, max: -5, step: 0.1, unit: "LUFS", label: "Target loudness" },
} as const satisfies Record<string, FieldRange>;

export const EQ_SHAPES = ["peak", "lowShelf", "highShelf", "highPass", "lowPass", "notch"] as const;
export const EQ_CHANNELS = ["stereo", "mid", "side", "left", "right"] as const;
export const OVERSAMPLE_FACTORS = [2, 4] as const;
export const RESONANCE_LISTEN = ["output", "removed"] as const;
export const BIT_DEPTHS = [16, 24, "32f"] as const;
export const DITHERS = ["tpdf", "none"] as const;
export const STAGE_TYPES = ["trim", "eq", "saturate", "resonance", "tape", "compress", "multiband", "limit"] as const;
export const MAX_CROSSOVERS = 4;

// The chain as JSON (DESIGN.md "Chain stages"), validated with zod. Ranges
// come from fields.ts. `bitDepth` takes 16, 24 or the string "32f" (32-bit
// float); a bare 32 is rejected so nobody expects 32-bit integers.
// parseChain() turns zod issues into { path, message } with the stage named:
//   stages[2] (compress).ratio: must be at least 1

import { z } from "zod";
import {
  BIT_DEPTHS,
  COMPRESS_FIELDS,
  DITHERS,
  EQ_BAND_FIELDS,
  EQ_CHANNELS,
  EQ_SHAPES,
  LIMIT_FIELDS,
  MAX_CROSSOVERS,
  MULTIBAND_FIELDS,
  OUTPUT_FIELDS,
  RESONANCE_FIELDS,
  RESONANCE_LISTEN,
  SATURATE_FIELDS,
  TAPE_FIELDS,
  TRIM_FIELDS,
  type FieldRange,
} from "./fields.ts";

function num(range: FieldRange) {
  const base = z
    .number({ error: (iss) => (iss.input === undefined ? "is required" : "must be a number") })
    .min(range.min, { error: `must be at least ${range.min}` })
    .max(range.max, { error: `must be at most ${range.max}` });
  return range.default === undefined ? base : base.default(range.default);
}

const choice = <T extends readonly [string, ...string[]]>(values: T) =>
  z.enum(values, { error: `must be one of ${values.map((v) => JSON.stringify(v)).join(", ")}` });

const bypass = z.boolean({ error: "must be true or false" }).default(false);

const compressFields = {
  thresholdDb: num(COMPRESS_FIELDS.thresholdDb),
  ratio: num(COMPRESS_FIELDS.ratio),
  kneeDb: num(COMPRESS_FIELDS.kneeDb),
  attackMs: num(COMPRESS_FIELDS.attackMs),
  releaseMs: z
    .union([z.literal("auto"), num(COMPRESS_FIELDS.releaseMs)], {
      error: `must be "auto" or a number of ms from ${COMPRESS_FIELDS.releaseMs.min} to ${COMPRESS_FIELDS.releaseMs.max}`,
    })
    .default("auto"),
  makeupDb: num(COMPRESS_FIELDS.makeupDb),
  rmsWindowMs: num(COMPRESS_FIELDS.rmsWindowMs),
  sidechainHighPassHz: num(COMPRESS_FIELDS.sidechainHighPassHz).nullable().optional(),
};

export const trimStageSchema = z.strictObject({ type: z.literal("trim"), bypass, gainDb: num(TRIM_FIELDS.gainDb) });

export const eqBandSchema = z.strictObject({
  shape: choice(EQ_SHAPES),
  freqHz: num(EQ_BAND_FIELDS.freqHz),
  gainDb: num(EQ_BAND_FIELDS.gainDb),
  q: num(EQ_BAND_FIELDS.q),
  channel: choice(EQ_CHANNELS).default("stereo"),
});

export const eqStageSchema = z.strictObject({
  type: z.literal("eq"),
  bypass,
  bands: z.array(eqBandSchema, { error: "must be a list of bands" }).max(16, { error: "at most 16 bands" }),
});

export const saturateStageSchema = z.strictObject({
  type: z.literal("saturate"),
  bypass,
  driveDb: num(SATURATE_FIELDS.driveDb),
  blend: num(SATURATE_FIELDS.blend),
  oversample: z.union([z.literal(2), z.literal(4)], { error: "must be 2 or 4" }).default(4),
});

export const resonanceStageSchema = z
  .strictObject({
    type: z.literal("resonance"),
    bypass,
    lowHz: num(RESONANCE_FIELDS.lowHz),
    highHz: num(RESONANCE_FIELDS.highHz),
    thresholdDb: num(RESONANCE_FIELDS.thresholdDb),
    maxCutDb: num(RESONANCE_FIELDS.maxCutDb),
    attackMs: num(RESONANCE_FIELDS.attackMs),
    releaseMs: num(RESONANCE_FIELDS.releaseMs),
    blend: num(RESONANCE_FIELDS.blend),
    /** "removed": only what the stage takes away (previews and the desk; a print refuses it, see print-check.ts). */
    listen: choice(RESONANCE_LISTEN).default("output"),
  })
  .superRefine((stage, ctx) => {
    if (!(stage.highHz > stage.lowHz)) ctx.addIssue({ code: "custom", path: ["highHz"], message: `must be above the focus's lower limit (${stage.lowHz} Hz)` });
  });

export const tapeStageSchema = z.strictObject({
  type: z.literal("tape"),
  bypass,
  driveDb: num(TAPE_FIELDS.driveDb),
  bumpHz: num(TAPE_FIELDS.bumpHz),
  bumpDb: num(TAPE_FIELDS.bumpDb),
  rolloffHz: z
    .union([z.null(), num({ ...TAPE_FIELDS.rolloffHz, default: undefined })], {
      error: `must be null (no loss) or a number of Hz from ${TAPE_FIELDS.rolloffHz.min} to ${TAPE_FIELDS.rolloffHz.max}`,
    })
    .default(TAPE_FIELDS.rolloffHz.default),
  blend: num(TAPE_FIELDS.blend),
  oversample: z.union([z.literal(2), z.literal(4)], { error: "must be 2 or 4" }).default(4),
});

export const compressStageSchema = z.strictObject({ type: z.literal("compress"), bypass, ...compressFields });

export const multibandBandSchema = z.strictObject({
  ...compressFields,
  bypass,
  solo: z.boolean({ error: "must be true or false" }).default(false),
});

export const multibandStageSchema = z
  .strictObject({
    type: z.literal("multiband"),
    bypass,
    crossoversHz: z
      .array(num(MULTIBAND_FIELDS.crossoverHz), { error: "must be a list of frequencies" })
      .min(1, { error: "needs at least 1 crossover" })
      .max(MAX_CROSSOVERS, { error: `at most ${MAX_CROSSOVERS} crossovers` }),
    bands: z.array(multibandBandSchema, { error: "must be a list of bands" }),
  })
  .superRefine((stage, ctx) => {
    for (let i = 1; i < stage.crossoversHz.length; i++) {
      if (!(stage.crossoversHz[i] > stage.crossoversHz[i - 1])) {
        ctx.addIssue({ code: "custom", path: ["crossoversHz", i], message: "crossovers must be in ascending order" });
      }
    }
    if (stage.bands.length !== stage.crossoversHz.length + 1) {
      ctx.addIssue({
        code: "custom",
        path: ["bands"],
        message: `${stage.crossoversHz.length} crossovers need ${stage.crossoversHz.length + 1} bands, got ${stage.bands.length}`,
      });
    }
  });

export const limitStageSchema = z.strictObject({
  type: z.literal("limit"),
  bypass,
  inputGainDb: num(LIMIT_FIELDS.inputGainDb),
  ceilingDbtp: num(LIMIT_FIELDS.ceilingDbtp),
  lookaheadMs: num(LIMIT_FIELDS.lookaheadMs),
  releaseMs: num(LIMIT_FIELDS.releaseMs),
  truePeak: z.boolean({ error: "must be true or false" }).default(true),
});

export const stageSchema = z.discriminatedUnion("type", [trimStageSchema, eqStageSchema, saturateStageSchema, resonanceStageSchema, tapeStageSchema, compressStageSchema, multibandStageSchema, limitStageSchema], {
  error: 'must be one of "trim", "eq", "saturate", "resonance", "tape", "compress", "multiband", "limit"',
});

export const outputSettingsSchema = z.strictObject({
  sampleRate: z.number({ error: "must be a number" }).int({ error: "must be a whole number" }).min(8000, { error: "must be at least 8000" }).max(384000, { error: "must be at most 384000" }).optional(),
  bitDepth: z.union([z.literal(16), z.literal(24), z.literal("32f")], { error: `must be one of ${BIT_DEPTHS.map((b) => JSON.stringify(b)).join(", ")}` }).default(24),
  dither: choice(DITHERS).default("tpdf"),
  targetLufs: num(OUTPUT_FIELDS.targetLufs).optional(),
});

export const chainSchema = z.strictObject({
  stages: z.array(stageSchema, { error: "must be a list of stages" }).max(32, { error: "at most 32 stages" }),
  output: outputSettingsSchema.default({ bitDepth: 24, dither: "tpdf" }),
});

export type Chain = z.output<typeof chainSchema>;
export type ChainInput = z.input<typeof chainSchema>;
export type Stage = z.output<typeof stageSchema>;
export type TrimStage = z.output<typeof trimStageSchema>;
export type EqStage = z.output<typeof eqStageSchema>;
export type EqBand = z.output<typeof eqBandSchema>;
export type SaturateStage = z.output<typeof saturateStageSchema>;
export type ResonanceStage = z.output<typeof resonanceStageSchema>;
export type TapeStage = z.output<typeof tapeStageSchema>;
export type CompressStage = z.output<typeof compressStageSchema>;
export type MultibandStage = z.output<typeof multibandStageSchema>;
export type MultibandBand = z.output<typeof multibandBandSchema>;
export type LimitStage = z.output<typeof limitStageSchema>;
export type OutputSettings = z.output<typeof outputSettingsSchema>;

export interface ChainFieldError {
  path: string;
  message: string;
}

export type ParseChainResult = { ok: true; chain: Chain } | { ok: false; errors: ChainFieldError[] };

/** "stages[2] (compress).bands[1].ratio" from a zod path and the raw input. */
export function formatPath(path: readonly PropertyKey[], input: unknown): string {
  let out = "";
  let node: unknown = input;
  for (let i = 0; i < path.length; i++) {
    const key = path[i];
    if (typeof key === "number") out += `[${key}]`;
    else out += (out ? "." : "") + String(key);
    node = node && typeof node === "object" ? (node as Record<PropertyKey, unknown>)[key] : undefined;
    if (i === 1 && path[0] === "stages" && node && typeof node === "object") {
      const type = (node as { type?: unknown }).type;
      if (typeof type === "string") out += ` (${type})`;
    }
  }
  return out;
}

export function parseChain(json: unknown): ParseChainResult {
  const result = chainSchema.safeParse(json);
  if (result.success) return { ok: true, chain: result.data };
  const errors = result.error.issues.map((issue) => {
    let message = issue.message;
    if (issue.code === "unrecognized_keys") message = `unknown field${issue.keys.length > 1 ? "s" : ""} ${issue.keys.join(", ")}`;
    return { path: formatPath(issue.path, json), message };
  });
  return { ok: false, errors };
}

export function formatChainErrors(errors: ChainFieldError[]): string {
  return errors.map((e) => (e.path ? `${e.path}: ${e.message}` : e.message)).join("\n");
}

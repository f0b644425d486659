// A new stage of each type, with the renderer's defaults (fields.ts) and
// neutral frequencies where there is no default.
import { COMPRESS_FIELDS, LIMIT_FIELDS, RESONANCE_FIELDS, SATURATE_FIELDS, TAPE_FIELDS } from "../../../dsp/chain/fields.ts";

export type Json = Record<string, unknown>;

export function compressDefaults(): Json {
  return {
    thresholdDb: COMPRESS_FIELDS.thresholdDb.default,
    ratio: COMPRESS_FIELDS.ratio.default,
    kneeDb: COMPRESS_FIELDS.kneeDb.default,
    attackMs: COMPRESS_FIELDS.attackMs.default,
    releaseMs: "auto",
    makeupDb: COMPRESS_FIELDS.makeupDb.default,
    rmsWindowMs: COMPRESS_FIELDS.rmsWindowMs.default,
  };
}

export function newEqBand(): Json {
  return { shape: "peak", freqHz: 1000, gainDb: 0, q: 0.707, channel: "stereo" };
}

export function newMultibandBand(): Json {
  return { ...compressDefaults(), bypass: false, solo: false };
}

export function newStage(type: string): Json {
  switch (type) {
    case "trim":
      return { type, bypass: false, gainDb: 0 };
    case "eq":
      return { type, bypass: false, bands: [newEqBand()] };
    case "saturate":
      return { type, bypass: false, driveDb: SATURATE_FIELDS.driveDb.default, blend: SATURATE_FIELDS.blend.default, oversample: 4 };
    case "resonance": {
      const f = RESONANCE_FIELDS;
      return {
        type,
        bypass: false,
        lowHz: f.lowHz.default,
        highHz: f.highHz.default,
        thresholdDb: f.thresholdDb.default,
        maxCutDb: f.maxCutDb.default,
        attackMs: f.attackMs.default,
        releaseMs: f.releaseMs.default,
        blend: f.blend.default,
        listen: "output",
      };
    }
    case "tape": {
      const f = TAPE_FIELDS;
      return { type, bypass: false, driveDb: f.driveDb.default, bumpHz: f.bumpHz.default, bumpDb: f.bumpDb.default, rolloffHz: f.rolloffHz.default, blend: f.blend.default, oversample: 4 };
    }
    case "compress":
      return { type, bypass: false, ...compressDefaults() };
    case "multiband":
      return { type, bypass: false, crossoversHz: [200, 2000], bands: [newMultibandBand(), newMultibandBand(), newMultibandBand()] };
    case "limit":
      return {
        type,
        bypass: false,
        inputGainDb: LIMIT_FIELDS.inputGainDb.default,
        ceilingDbtp: LIMIT_FIELDS.ceilingDbtp.default,
        lookaheadMs: LIMIT_FIELDS.lookaheadMs.default,
        releaseMs: LIMIT_FIELDS.releaseMs.default,
        truePeak: true,
      };
    default:
      throw new Error(`unknown stage type ${type}`);
  }
}

/** Immutable update at a path of keys and indexes. */
export function setAt<T>(root: T, path: (string | number)[], value: unknown): T {
  if (path.length === 0) return value as T;
  const [head, ...rest] = path;
  if (Array.isArray(root)) {
    const copy = [...root];
    copy[head as number] = setAt(copy[head as number], rest, value);
    return copy as T;
  }
  const obj = (root ?? {}) as Json;
  const next = { ...obj, [head]: setAt(obj[head as string], rest, value) };
  if (value === undefined && rest.length === 0) delete next[head as string];
  return next as T;
}

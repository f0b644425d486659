// Labels and units of chain parameters for the editor and the revision diff,
// from the renderer's own field metadata (dsp/chain/fields.ts).
import {
  COMPRESS_FIELDS,
  EQ_BAND_FIELDS,
  LIMIT_FIELDS,
  MULTIBAND_FIELDS,
  OUTPUT_FIELDS,
  RESONANCE_FIELDS,
  SATURATE_FIELDS,
  TAPE_FIELDS,
  TRIM_FIELDS,
  type FieldRange,
} from "../../../dsp/chain/fields.ts";

export const STAGE_LABELS: Record<string, string> = {
  trim: "Trim",
  eq: "Equaliser",
  saturate: "Saturation",
  resonance: "Resonance taming",
  tape: "Tape colour",
  compress: "Compressor",
  multiband: "Multiband compressor",
  limit: "Limiter",
};

const OTHER_LABELS: Record<string, { label: string; unit?: string }> = {
  type: { label: "Stage type" },
  bypass: { label: "Bypass" },
  solo: { label: "Solo" },
  shape: { label: "Shape" },
  channel: { label: "Channel" },
  oversample: { label: "Oversampling", unit: "×" },
  truePeak: { label: "True-peak detection" },
  sampleRate: { label: "Sample rate", unit: "Hz" },
  bitDepth: { label: "Bit depth", unit: "bit" },
  dither: { label: "Dither" },
  crossoversHz: { label: "Crossover", unit: "Hz" },
  listen: { label: "Listen to" },
};

const FIELD_GROUPS: Record<string, FieldRange>[] = [COMPRESS_FIELDS, TRIM_FIELDS, EQ_BAND_FIELDS, SATURATE_FIELDS, MULTIBAND_FIELDS, LIMIT_FIELDS, OUTPUT_FIELDS, RESONANCE_FIELDS, TAPE_FIELDS];

/** Fields whose label is the stage's own (a resonance stage's thresholdDb is not a compressor's). */
const STAGE_FIELDS: Record<string, Record<string, FieldRange>> = { resonance: RESONANCE_FIELDS, tape: TAPE_FIELDS };

/** Label and unit of a parameter by its key (the same key means the same thing in every stage, unless the stage has its own). */
export function describeKey(key: string, stageType?: string): { label: string; unit: string } {
  const own = stageType ? STAGE_FIELDS[stageType] : undefined;
  if (own && key in own) return { label: own[key].label, unit: own[key].unit };
  for (const group of FIELD_GROUPS) if (key in group) return { label: group[key].label, unit: group[key].unit };
  const other = OTHER_LABELS[key];
  return other ? { label: other.label, unit: other.unit ?? "" } : { label: key, unit: "" };
}

export function formatValue(value: unknown, unit: string): string {
  if (value === null || value === undefined) return "—";
  if (typeof value === "boolean") return value ? "on" : "off";
  if (typeof value === "number") {
    if (unit === ":1") return `${value}:1`;
    if (unit === "bit") return `${value}-bit`;
    return unit ? `${value} ${unit}` : String(value);
  }
  if (value === "32f") return "32-bit float";
  return String(value);
}

type Part = string | number;

export function splitPath(path: string): Part[] {
  const parts: Part[] = [];
  for (const match of path.matchAll(/([^.[\]]+)|\[(\d+)\]/g)) parts.push(match[2] !== undefined ? Number(match[2]) : match[1]);
  return parts;
}

/**
 * "stages[2].bands[1].ratio" → "Stage 3 (Multiband compressor) · Band 2 · Ratio",
 * the stage's type read from the chain it belongs to.
 */
export function describePath(path: string, chains: unknown[]): { where: string; label: string; unit: string } {
  const parts = splitPath(path);
  const where: string[] = [];
  let label = "";
  let unit = "";
  let stageType: string | undefined;
  for (let i = 0; i < parts.length; i++) {
    const part = parts[i];
    const next = parts[i + 1];
    if (part === "stages" && typeof next === "number") {
      const type = chains.map((c) => (c as { stages?: { type?: string }[] })?.stages?.[next]?.type).find(Boolean);
      stageType = type;
      where.push(`Stage ${next + 1}${type ? ` (${STAGE_LABELS[type] ?? type})` : ""}`);
      i++;
    } else if (part === "bands" && typeof next === "number") {
      where.push(`Band ${next + 1}`);
      i++;
    } else if (part === "output") {
      where.push("Output");
    } else if (typeof part === "string") {
      ({ label, unit } = describeKey(part, stageType));
      if (typeof next === "number") {
        label = `${label} ${next + 1}`;
        i++;
      }
    }
  }
  return { where: where.join(" · "), label, unit };
}

/** parseChain's "stages[2] (compress).ratio" as the editor's key "stages[2].ratio". */
export function editorPath(path: string): string {
  return path.replace(/ \([^)]*\)/g, "");
}

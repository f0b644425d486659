// The desk's settings as the engineer edits them: the chain as JSON (what
// is typed may be out of range for a moment), checked with the renderer's
// own schema before it reaches the engine or the record. Pure functions,
// shared by the page and the server (no browser APIs).
import { parseChain, type Chain } from "../../../dsp/chain/schema.ts";
import type { FieldRange } from "../../../dsp/chain/fields.ts";
import { editorPath } from "../chain/labels.ts";

export type Json = Record<string, unknown>;
export type EditableChain = { stages: Json[]; output: Json };
export type Path = (string | number)[];

/** "stages[2].bands[1].ratio", the key the server's errors use. */
export const pathKey = (path: Path) => path.reduce<string>((out, p) => (typeof p === "number" ? `${out}[${p}]` : out ? `${out}.${p}` : p), "");

/** The chain the engine and the record take, or the errors keyed by field (as the server answers them). */
export function checkChain(chain: EditableChain): { ok: true; chain: Chain } | { ok: false; errors: Record<string, string> } {
  const parsed = parseChain(chain);
  if (parsed.ok) return parsed;
  const errors: Record<string, string> = {};
  for (const e of parsed.errors) errors[editorPath(e.path) || "chain"] ??= e.message;
  return { ok: false, errors };
}

/** Multiband bands left soloed ("Stage 3 band 2"): saved as they are, the print would carry only them. */
export function soloedBands(chain: EditableChain): { stage: number; band: number }[] {
  const out: { stage: number; band: number }[] = [];
  chain.stages.forEach((s, i) => {
    if (s.type !== "multiband" || s.bypass === true) return;
    ((s.bands as Json[]) ?? []).forEach((b, j) => {
      if (b.solo === true) out.push({ stage: i, band: j });
    });
  });
  return out;
}

/** The same chain with every band's solo released. */
export function withoutSolo(chain: EditableChain): EditableChain {
  return {
    ...chain,
    stages: chain.stages.map((s) => (s.type === "multiband" ? { ...s, bands: ((s.bands as Json[]) ?? []).map((b) => ({ ...b, solo: false })) } : s)),
  };
}

/** Decimal places of a step (0.05 → 2), so nudged values print without float dust. */
function decimals(step: number): number {
  const text = String(step);
  const dot = text.indexOf(".");
  return dot < 0 ? 0 : text.length - dot - 1;
}

export function roundTo(value: number, step: number): number {
  const places = decimals(step);
  return Number((Math.round(value / step) * step).toFixed(places));
}

/**
 * One nudge of a parameter: `steps` (±1 for an arrow or a wheel notch, the
 * pixels' worth for a drag) of the field's step, a tenth of it when `fine`
 * (Shift). Frequencies move by fractions of an octave instead (1/24 per
 * step, 1/96 fine), which is how they are heard. Clamped to the range.
 */
export function nudge(value: number, range: FieldRange, steps: number, fine: boolean): number {
  if (range.unit === "Hz") {
    const octaves = (steps / (fine ? 96 : 24));
    const next = value * 2 ** octaves;
    const step = next < 100 ? 0.1 : 1;
    // Always move by at least one displayed step, so a slow drag still moves.
    let rounded = roundTo(next, step);
    if (rounded === value && steps !== 0) rounded = roundTo(value + Math.sign(steps) * step, step);
    return Math.min(range.max, Math.max(range.min, rounded));
  }
  const step = fine ? range.step / 10 : range.step;
  // Rounded to the fine step only, so a value set finely keeps its fine part when moved coarsely.
  return Math.min(range.max, Math.max(range.min, roundTo(value + steps * step, range.step / 10)));
}

/** Immutable update at a path of keys and indexes. */
export function setAt<T>(root: T, path: Path, value: unknown): T {
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

export function getAt(root: unknown, path: Path): unknown {
  let node = root;
  for (const p of path) node = node && typeof node === "object" ? (node as Record<string | number, unknown>)[p] : undefined;
  return node;
}

// Playback normalisation: a service that plays everything at a reference
// loudness turns a louder master down by (integrated − reference) and, in the
// common case assumed here, does not turn a quieter one up (common practice;
// some services do raise quiet tracks, limited by their peak headroom).
// The reference levels are the studio's editable settings, not rules.

export interface NormalisationReference {
  name: string;
  lufs: number;
}

/** Offered to a new studio; every value is editable (common practice levels, from memory). */
export const DEFAULT_NORMALISATION_REFERENCES: readonly NormalisationReference[] = [
  { name: "Streaming reference", lufs: -14 },
  { name: "Quiet streaming reference", lufs: -16 },
  { name: "Broadcast reference (EBU R 128)", lufs: -23 },
];

/** How far a track at integratedLufs is turned down at referenceLufs, in dB (≥ 0). */
export function turnDownDb(integratedLufs: number, referenceLufs: number): number {
  if (!Number.isFinite(integratedLufs)) return 0;
  return Math.max(0, integratedLufs - referenceLufs);
}

/** Throws with a specific message unless the list is usable as settings. */
export function checkReferences(value: unknown): NormalisationReference[] {
  if (!Array.isArray(value)) throw new TypeError("normalisation references must be a list");
  if (value.length > 12) throw new RangeError("at most 12 normalisation references");
  const names = new Set<string>();
  return value.map((item, i) => {
    const name = typeof item?.name === "string" ? item.name.trim() : "";
    const lufs = item?.lufs;
    if (name.length < 1 || name.length > 60) throw new RangeError(`reference ${i + 1}: name must be 1 to 60 characters`);
    if (names.has(name.toLowerCase())) throw new RangeError(`reference ${i + 1}: the name "${name}" is used twice`);
    names.add(name.toLowerCase());
    if (typeof lufs !== "number" || !Number.isFinite(lufs) || lufs > 0 || lufs < -40) {
      throw new RangeError(`reference ${i + 1}: lufs must be a number between -40 and 0`);
    }
    return { name, lufs };
  });
}

// Results of the renderer as plain JSON for jsonb columns and trace files:
// typed arrays become arrays, non-finite numbers (the loudness of silence is
// −∞) become null, as JSON has no such numbers.
export function toJsonValue(value: unknown): unknown {
  if (typeof value === "number") return Number.isFinite(value) ? value : null;
  if (value === null || typeof value !== "object") return value;
  if (ArrayBuffer.isView(value) && !(value instanceof DataView)) {
    return Array.from(value as unknown as ArrayLike<number>, (x) => (Number.isFinite(x) ? x : null));
  }
  if (Array.isArray(value)) return value.map(toJsonValue);
  if (value instanceof Date) return value.toISOString();
  if (value instanceof Map) return Object.fromEntries([...value].map(([k, v]) => [String(k), toJsonValue(v)]));
  const out: Record<string, unknown> = {};
  for (const [key, entry] of Object.entries(value)) {
    if (entry !== undefined && typeof entry !== "function") out[key] = toJsonValue(entry);
  }
  return out;
}

// Numbers as the player shows them: always with their unit, in the monospaced face.

/** 75.25 → "1:15.3" */
export function formatClock(seconds: number): string {
  const s = Math.max(0, Number.isFinite(seconds) ? seconds : 0);
  const minutes = Math.floor(s / 60);
  const rest = s - minutes * 60;
  // Rounded first, so 59.96 s shows as 1:00.0 rather than 0:60.0.
  const tenths = Math.round(rest * 10);
  if (tenths >= 600) return `${minutes + 1}:00.0`;
  return `${minutes}:${(tenths / 10).toFixed(1).padStart(4, "0")}`;
}

/** −3.2 → "−3.2 dB", 0 → "0.0 dB" (a true minus sign, as in print). */
export function formatDb(valueDb: number, unit = "dB"): string {
  const rounded = Math.round(valueDb * 10) / 10;
  const text = Math.abs(rounded).toFixed(1);
  return `${rounded < 0 ? "−" : rounded > 0 ? "+" : ""}${text} ${unit}`;
}

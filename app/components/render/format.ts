// Figures as an engineer reads them: one decimal, the unit always shown,
// "—" where there is nothing to measure (silence gives −∞ or null).
export function fmt(value: unknown, unit: string, digits = 1): string {
  if (typeof value !== "number" || !Number.isFinite(value)) return "—";
  return `${value.toFixed(digits).replace("-", "−")} ${unit}`;
}

export function fmtDuration(seconds: number): string {
  if (!Number.isFinite(seconds)) return "—";
  const m = Math.floor(seconds / 60);
  const s = seconds - m * 60;
  return `${m}:${s.toFixed(1).padStart(4, "0")}`;
}

export const STATE_LABEL: Record<string, string> = {
  pending: "waiting",
  queued: "queued",
  running: "running",
  done: "done",
  failed: "failed",
  cancelled: "cancelled",
};

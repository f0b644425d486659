// Numbers of the desk as text, units always shown.
export function fmtDb(db: number, signed = false): string {
  if (!Number.isFinite(db)) return "–∞ dB";
  const text = db.toFixed(1);
  return `${signed && db > 0 ? "+" : ""}${text} dB`;
}

export function fmtHz(hz: number): string {
  return hz >= 1000 ? `${(hz / 1000).toFixed(hz >= 10000 ? 1 : 2)} kHz` : `${hz.toFixed(0)} Hz`;
}

export function fmtLufs(lufs: number): string {
  return Number.isFinite(lufs) ? `${lufs.toFixed(1)} LUFS` : "–∞ LUFS";
}

export function fmtDbtp(dbtp: number): string {
  return Number.isFinite(dbtp) ? `${dbtp.toFixed(1)} dBTP` : "–∞ dBTP";
}

/** Gain reduction as the meters show it: positive dB, one decimal ("0.0 dB" when none). */
export function fmtGr(grDb: number | undefined): string {
  return `${Math.max(0, grDb ?? 0).toFixed(1)} dB`;
}

export function fmtClock(seconds: number): string {
  const m = Math.floor(seconds / 60);
  const s = seconds - m * 60;
  return `${m}:${s.toFixed(1).padStart(4, "0")}`;
}

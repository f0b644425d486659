// Preview region: the loudest window (default 30 s) of a file by short-term
// loudness. Short-term value j (EBU Tech 3341, 3 s window) ends at
// (j+1)·gridMs; a window [s, s+W] scores the mean power of the values whose
// 3 s span lies inside it. Ties keep the earliest window.

export const SHORT_TERM_S = 3;

export function loudestWindow(shortTermLufs: readonly number[], gridMs: number, durationS: number, windowS = 30): { startS: number; endS: number } {
  if (durationS <= windowS) return { startS: 0, endS: durationS };
  const stepS = gridMs / 1000;
  const power = shortTermLufs.map((l) => (Number.isFinite(l) ? 10 ** (l / 10) : 0));
  // Entries j with end time in [s + 3, s + W] ⇔ j ∈ [first, last].
  const span = Math.max(1, Math.round((windowS - SHORT_TERM_S) / stepS));
  const offset = Math.round(SHORT_TERM_S / stepS) - 1;
  const starts = Math.floor((durationS - windowS) / stepS);
  let sum = 0;
  for (let j = offset; j < Math.min(power.length, offset + span); j++) sum += power[j];
  let best = sum, bestK = 0;
  for (let k = 1; k <= starts; k++) {
    const drop = offset + k - 1, add = offset + k - 1 + span;
    if (drop < power.length) sum -= power[drop];
    if (add < power.length) sum += power[add];
    if (sum > best * (1 + 1e-12)) {
      best = sum;
      bestK = k;
    }
  }
  const startS = bestK * stepS;
  return { startS, endS: Math.min(durationS, startS + windowS) };
}

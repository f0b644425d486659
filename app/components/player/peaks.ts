// Peaks for the waveform overview: per pixel column, the lowest and highest
// sample of any channel over that column's stretch of time. Computed from the
// decoded buffer in the browser (a few ms for a whole track).
export type Peaks = { min: Float32Array; max: Float32Array };

export function computePeaks(channels: readonly Float32Array[], startFrame: number, endFrame: number, columns: number): Peaks {
  const min = new Float32Array(columns);
  const max = new Float32Array(columns);
  const length = channels[0]?.length ?? 0;
  const from = Math.max(0, Math.min(length, Math.floor(startFrame)));
  const to = Math.max(from, Math.min(length, Math.floor(endFrame)));
  const perColumn = (to - from) / columns;
  for (let c = 0; c < columns; c++) {
    const a = from + Math.floor(c * perColumn);
    const b = Math.max(a + 1, Math.min(to, from + Math.floor((c + 1) * perColumn)));
    let lo = 0;
    let hi = 0;
    for (const ch of channels) {
      for (let i = a; i < b && i < to; i++) {
        const v = ch[i];
        if (v < lo) lo = v;
        if (v > hi) hi = v;
      }
    }
    min[c] = lo;
    max[c] = hi;
  }
  return { min, max };
}

// Peaks for the waveform overview: per pixel column, the lowest and highest
// sample of any channel over that column's stretch of time. Computed from the
// decoded buffer in the browser (a few ms for a whole track). Columns past
// the buffer's end (audio still loading) stay flat, so a partly loaded source
// is drawn at its place on the time axis, not stretched over it.
export type Peaks = { min: Float32Array; max: Float32Array };

export function computePeaks(channels: readonly Float32Array[], startFrame: number, endFrame: number, columns: number): Peaks {
  const min = new Float32Array(columns);
  const max = new Float32Array(columns);
  const length = channels[0]?.length ?? 0;
  const from = Math.floor(startFrame);
  const to = Math.max(from, Math.floor(endFrame));
  const perColumn = (to - from) / columns;
  const last = Math.min(length, to);
  for (let c = 0; c < columns; c++) {
    const a = Math.max(0, from + Math.floor(c * perColumn));
    const b = Math.max(a + 1, Math.min(to, from + Math.floor((c + 1) * perColumn)));
    let lo = 0;
    let hi = 0;
    for (const ch of channels) {
      for (let i = a; i < b && i < last; i++) {
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

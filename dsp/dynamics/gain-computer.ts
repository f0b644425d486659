// Static curve of a downward compressor: detected level (dB) → gain
// reduction (dB, positive = quieter). Quadratic soft knee of width kneeDb
// centred on the threshold (the usual textbook knee, analytic):
//   L < T − W/2          : 0
//   L > T + W/2          : (L − T)(1 − 1/R)
//   otherwise            : (1 − 1/R)(L − T + W/2)² / (2W)
// Sign convention: we return the reduction as a positive number; the gain
// applied is its negative (the textbook form (1/R − 1)(…)²/(2W) is the gain).

export function gainReductionDb(levelDb: number, thresholdDb: number, ratio: number, kneeDb: number): number {
  const over = levelDb - thresholdDb;
  const slope = 1 - 1 / ratio;
  const halfKnee = kneeDb / 2;
  if (kneeDb > 0 && over > -halfKnee && over < halfKnee) {
    const x = over + halfKnee;
    return (slope * x * x) / (2 * kneeDb);
  }
  return over > 0 ? over * slope : 0;
}

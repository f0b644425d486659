// A compressor's static curve for drawing: input level → output level, from
// the gain computer the compressor itself runs (gain-computer.ts), makeup
// included; and the live operating point, the input level that gives the
// gain reduction the meter reads (the curve inverted).

import { gainReductionDb } from "../dynamics/gain-computer.ts";

export interface StaticCurveSettings {
  thresholdDb: number;
  ratio: number;
  kneeDb: number;
  makeupDb: number;
}

/** Output level (dB) for a detected input level (dB). */
export function staticOutputDb(inputDb: number, s: StaticCurveSettings): number {
  return inputDb - gainReductionDb(inputDb, s.thresholdDb, s.ratio, s.kneeDb) + s.makeupDb;
}

/** Points of the static curve over [lowDb, highDb], `count` of them. */
export function staticCurve(s: StaticCurveSettings, lowDb: number, highDb: number, count: number): { inputDb: number; outputDb: number }[] {
  const points = [];
  for (let i = 0; i < count; i++) {
    const inputDb = lowDb + ((highDb - lowDb) * i) / (count - 1);
    points.push({ inputDb, outputDb: staticOutputDb(inputDb, s) });
  }
  return points;
}

/**
 * The detected level at which the static curve reduces by `grDb` (≥ 0), or
 * null when there is no reduction to place (0 dB: anywhere below the knee).
 * The reduction grows monotonically with the level above the knee's start,
 * so bisection finds it; 60 halvings of a 200 dB span leave far under 1e-9 dB.
 */
export function operatingPoint(grDb: number, s: StaticCurveSettings): { inputDb: number; outputDb: number } | null {
  if (!(grDb > 1e-6) || s.ratio <= 1) return null;
  let low = s.thresholdDb - s.kneeDb / 2;
  let high = low + 200;
  for (let i = 0; i < 60; i++) {
    const mid = (low + high) / 2;
    if (gainReductionDb(mid, s.thresholdDb, s.ratio, s.kneeDb) < grDb) low = mid;
    else high = mid;
  }
  const inputDb = (low + high) / 2;
  return { inputDb, outputDb: staticOutputDb(inputDb, s) };
}

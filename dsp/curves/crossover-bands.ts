// The multiband stage's bands for drawing: the magnitude of each band of the
// Linkwitz-Riley (LR4) band splitter (crossover.ts) on a frequency grid, from
// the splitter's own section design (designLinkwitzRiley4) and its own tree.
// The splitter splits at the middle crossover first, then each half again
// (a balanced tree), so a band is the product of the LR4 low or high outputs
// on its path from the root; the compensation all-passes have unit
// magnitude. An LR4 low output is the Butterworth low-pass twice; its high
// output (all-pass − low, as the splitter computes it) equals the Butterworth
// high-pass twice.

import { biquadPowerGain } from "../filters/biquad-design.ts";
import { designLinkwitzRiley4 } from "../filters/crossover.ts";

/** For each band, the splits on its path: crossover index and which side. Mirrors BandSplitter's plan. */
export function bandPaths(crossoverCount: number): { crossover: number; side: "low" | "high" }[][] {
  const paths: { crossover: number; side: "low" | "high" }[][] = Array.from({ length: crossoverCount + 1 }, () => []);
  const plan = (lo: number, hi: number, path: { crossover: number; side: "low" | "high" }[]): void => {
    if (lo >= hi) {
      paths[hi] = path;
      return;
    }
    const m = (lo + hi) >> 1;
    plan(lo, m, [...path, { crossover: m, side: "low" }]);
    plan(m + 1, hi, [...path, { crossover: m, side: "high" }]);
  };
  plan(0, crossoverCount, []);
  return paths;
}

/** One Float64Array of dB per band (crossoversHz.length + 1 bands, lowest first), at each frequency. */
export function crossoverBandsDb(crossoversHz: readonly number[], sampleRate: number, freqsHz: ArrayLike<number>): Float64Array[] {
  const designs = crossoversHz.map((hz) => designLinkwitzRiley4(hz, sampleRate));
  return bandPaths(crossoversHz.length).map((path) => {
    const out = new Float64Array(freqsHz.length);
    for (let i = 0; i < freqsHz.length; i++) {
      const f = freqsHz[i];
      if (!(f < sampleRate / 2)) {
        out[i] = NaN;
        continue;
      }
      let power = 1;
      // |H|² of one Butterworth section; LR4 runs it twice, so squared.
      for (const step of path) power *= biquadPowerGain(step.side === "low" ? designs[step.crossover].lowPass : designs[step.crossover].highPass, f, sampleRate) ** 2;
      out[i] = 10 * Math.log10(power);
    }
    return out;
  });
}

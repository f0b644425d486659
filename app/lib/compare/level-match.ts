// Level matching for the A/B comparison: the louder source is turned down by
// the difference of loudness, the quieter one is left alone (turning it up
// could clip and would make the comparison louder than either render).
//
// Whole sources are matched by integrated loudness (ITU-R BS.1770-4, as the
// renders' analyses give it). A loop region is matched by the region's own
// loudness, which the stored analyses do not hold exactly: they keep only the
// 3 s short-term curve on a 10 ms grid, not the 400 ms momentary blocks.
// Two ways, best first:
//   1. measureRegionLufs: the region's samples through our BS.1770 meter —
//      gated momentary blocks, exactly as an integrated loudness of the region.
//      The player does this on the decoded buffers in the browser.
//   2. regionLoudnessFromShortTerm: an energy average, gated like BS.1770, of
//      the short-term values whose 3 s window lies inside the region. Only an
//      approximation: samples near the region's edges weigh less than those in
//      its middle, and a region under 3 s has no such window at all (then the
//      windows that end inside it are used, which reach before the region).
import { LoudnessMeter } from "../../../dsp/loudness/meter.ts";

/** Below the BS.1770 absolute gate a source counts as silent: nothing to match against. */
export const SILENCE_LUFS = -70;
const SHORT_TERM_WINDOW_S = 3;
const RELATIVE_GATE_LU = -10;
const LOUDNESS_OFFSET_DB = -0.691;

export type LevelMatch = {
  /** Gain to apply to A, dB (0 or negative). */
  gainADb: number;
  /** Gain to apply to B, dB (0 or negative). */
  gainBDb: number;
  /** Loudness of A minus loudness of B, LU; 0 when either is unknown or silent. */
  differenceDb: number;
  /** False when a loudness was missing or silent and no gain was applied. */
  matched: boolean;
};

const audible = (lufs: number | null | undefined): lufs is number => typeof lufs === "number" && Number.isFinite(lufs) && lufs > SILENCE_LUFS;

/** The gains that bring two sources of loudness `aLufs` and `bLufs` to the quieter one's level. */
export function levelMatch(aLufs: number | null | undefined, bLufs: number | null | undefined): LevelMatch {
  if (!audible(aLufs) || !audible(bLufs)) return { gainADb: 0, gainBDb: 0, differenceDb: 0, matched: false };
  const differenceDb = aLufs - bLufs;
  return {
    gainADb: differenceDb > 0 ? -differenceDb : 0,
    gainBDb: differenceDb < 0 ? differenceDb : 0,
    differenceDb,
    matched: true,
  };
}

/** What level matching needs of a source's analysis (a mix's or a render's output analysis). */
export type LoudnessSource = {
  integratedLufs: number | null;
  gridMs?: number;
  /** Short-term loudness at the end of each grid step; -Infinity or null where silent. */
  shortTermLufs?: readonly (number | null)[];
  /** Where the source's t = 0 sits on the mix's time axis, s (a preview starts at its region's start). */
  offsetS?: number;
};

const lufsToPower = (lufs: number) => Math.pow(10, (lufs - LOUDNESS_OFFSET_DB) / 10);
const powerToLufs = (power: number) => LOUDNESS_OFFSET_DB + 10 * Math.log10(power);

/** BS.1770 gating (−70 LUFS absolute, −10 LU relative) over block loudnesses, energy-averaged. */
function gatedAverage(blocksLufs: number[]): number | null {
  const absolute = blocksLufs.filter((v) => v > SILENCE_LUFS).map(lufsToPower);
  if (absolute.length === 0) return null;
  const gatePower = lufsToPower(powerToLufs(absolute.reduce((s, p) => s + p, 0) / absolute.length) + RELATIVE_GATE_LU);
  const kept = absolute.filter((p) => p > gatePower);
  return kept.length ? powerToLufs(kept.reduce((s, p) => s + p, 0) / kept.length) : null;
}

/**
 * Approximate loudness of [startS, endS) on the mix's time axis from a
 * source's short-term curve (see the note at the top). null when the source
 * has no curve, does not cover the region, or is silent there.
 */
export function regionLoudnessFromShortTerm(source: LoudnessSource, startS: number, endS: number): number | null {
  const curve = source.shortTermLufs;
  const gridMs = source.gridMs ?? 10;
  if (!curve || curve.length === 0 || !(endS > startS)) return null;
  const stepS = gridMs / 1000;
  const offsetS = source.offsetS ?? 0;
  // Value j is the short-term loudness of the window ending at offset + (j + 1)·step.
  const windowEnd = (j: number) => offsetS + (j + 1) * stepS;
  const pick = (fromS: number) => {
    const values: number[] = [];
    for (let j = 0; j < curve.length; j++) {
      const end = windowEnd(j);
      // A small tolerance so a window ending exactly on the region's edge counts despite rounding.
      if (end >= fromS - 1e-9 && end <= endS + 1e-9) {
        // A window reaching before the source's own start was padded with silence: not the region's sound.
        if (end - SHORT_TERM_WINDOW_S < offsetS - 1e-9) continue;
        const v = curve[j];
        values.push(typeof v === "number" ? v : -Infinity);
      }
    }
    return values;
  };
  let values = pick(startS + SHORT_TERM_WINDOW_S);
  if (values.length === 0) values = pick(startS + stepS);
  return values.length ? gatedAverage(values) : null;
}

/**
 * Loudness of a region of audio, measured exactly: the region's frames through
 * the BS.1770 meter, giving its gated integrated loudness. `channels` are the
 * whole source's channels (1 or 2; Float32Array as the Web Audio API decodes).
 * null when the region is silent or shorter than one 400 ms block.
 */
export function measureRegionLufs(channels: readonly (Float32Array | Float64Array)[], sampleRate: number, startS: number, endS: number): number | null {
  const used = channels.slice(0, 2);
  if (used.length === 0) return null;
  const length = used[0].length;
  const startFrame = Math.max(0, Math.min(length, Math.round(startS * sampleRate)));
  const endFrame = Math.max(startFrame, Math.min(length, Math.round(endS * sampleRate)));
  // A 100 ms grid divides into whole frames at any whole sample rate divisible by 10; the gated result does not depend on it.
  const meter = new LoudnessMeter(sampleRate, used.length, { truePeak: false, gridMs: 100 });
  const chunkFrames = 8192;
  const buffers = used.map(() => new Float64Array(chunkFrames));
  for (let pos = startFrame; pos < endFrame; pos += chunkFrames) {
    const n = Math.min(chunkFrames, endFrame - pos);
    used.forEach((ch, c) => {
      const buf = buffers[c];
      for (let i = 0; i < n; i++) buf[i] = ch[pos + i];
    });
    meter.process(buffers, n);
  }
  const lufs = meter.result().integratedLufs;
  return audible(lufs) ? lufs : null;
}

export type RegionMatchOptions = {
  /** Region loudnesses measured elsewhere (e.g. measureRegionLufs); preferred over the short-term estimate. */
  aRegionLufs?: number | null;
  bRegionLufs?: number | null;
};

/**
 * Level match for a loop region [startS, endS) on the mix's time axis: a
 * passed region loudness when given, else the short-term estimate. When a
 * source's region loudness is unknown the match falls back to integrated
 * loudness for both (mixing the two bases would compare unlike with unlike).
 */
export function levelMatchRegion(a: LoudnessSource, b: LoudnessSource, startS: number, endS: number, options: RegionMatchOptions = {}): LevelMatch & { basis: "region" | "integrated" } {
  const aLufs = options.aRegionLufs ?? regionLoudnessFromShortTerm(a, startS, endS);
  const bLufs = options.bRegionLufs ?? regionLoudnessFromShortTerm(b, startS, endS);
  if (audible(aLufs) && audible(bLufs)) return { ...levelMatch(aLufs, bLufs), basis: "region" };
  return { ...levelMatch(a.integratedLufs, b.integratedLufs), basis: "integrated" };
}

// Level matching inside the player: over the whole shared span, or over the
// loop when one is set. A source's stored integrated loudness is used only
// when the span is the whole source; otherwise (a preview against a print,
// or a loop) the decoded audio of exactly that stretch is measured with our
// BS.1770 meter (measureRegionLufs), which is exact where the stored
// short-term curve would only approximate it.
import { levelMatch, measureRegionLufs, type LevelMatch } from "../../lib/compare/level-match.ts";
import type { BufferLike, Region, SourceId } from "./ab-engine.ts";

export type MatchSource = {
  buffer: BufferLike;
  /** Where the buffer's 0 s sits on the mix's time axis. */
  offsetS: number;
  integratedLufs?: number | null;
  /** The whole source on the mix's time axis, when the buffer holds only part of it (still loading, or only the shared span). */
  whole?: Region;
};

const channelsOf = (buffer: BufferLike) => Array.from({ length: Math.min(2, buffer.numberOfChannels) }, (_, c) => buffer.getChannelData(c));

/** Loudness of `region` (mix axis) of a source, LUFS, or null when silent. */
export function sourceLoudness(source: MatchSource, region: Region): number | null {
  const extent = source.whole ?? { startS: source.offsetS, endS: source.offsetS + source.buffer.duration };
  const whole = Math.abs(region.startS - extent.startS) < 0.05 && Math.abs(region.endS - extent.endS) < 0.05;
  if (whole && typeof source.integratedLufs === "number") return source.integratedLufs;
  // Otherwise what is decoded of the region is measured (all of it once the source has loaded).
  return measureRegionLufs(channelsOf(source.buffer), source.buffer.sampleRate, region.startS - source.offsetS, region.endS - source.offsetS);
}

export function playerLevelMatch(sources: Record<SourceId, MatchSource>, region: Region): LevelMatch & { aLufs: number | null; bLufs: number | null } {
  const aLufs = sourceLoudness(sources.A, region);
  const bLufs = sourceLoudness(sources.B, region);
  return { ...levelMatch(aLufs, bLufs), aLufs, bLufs };
}

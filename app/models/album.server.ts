// The album: every track's current master in running order, the gaps
// between them (stored with the release), the album's own loudness and the
// consistency hints.
//
// A track's current master is its approved render, else its newest print
// (a full-length render), else its newest render of any kind, among the
// renders this viewer may hear (listReviewableRenders: staff all, a client
// only what was sent), so the same data serves the client's review room.
// Album loudness is measured from the masters' files (dsp/album.ts), with
// the gaps' silence, and remembered per set of masters and gaps.
import { db } from "../lib/db.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import type { LocalFile } from "../lib/storage/storage.server.ts";
import { consistencyHints, spectralTiltDbPerOctave, type Hint } from "../lib/album/consistency.ts";
import { measureAlbum, type AlbumLoudness } from "../../dsp/album.ts";
import { getTrackReviews, listReviewableRenders, type ReviewableRender, type Viewer } from "./review.server.ts";
import { listTracks } from "./track.server.ts";
import { spectrumOf, type SpectrumBands } from "./compare-source.server.ts";

export const DEFAULT_GAP_S = 2;
export const MAX_GAP_S = 60;
/** Points of the album's short-term loudness chart, at most (the step grows with the album's length). */
const MAX_CURVE_POINTS = 3000;
const MIN_CURVE_STEP_S = 0.5;

export type AlbumMaster = {
  renderId: string;
  kind: "preview" | "print";
  approved: boolean;
  audioUrl: string;
  durationS: number;
  sampleRateHz: number | null;
  integratedLufs: number | null;
  loudnessRangeLu: number | null;
  truePeakDbtp: number | null;
  plrDb: number | null;
  correlation: number | null;
  spectrum: SpectrumBands | null;
  tiltDbPerOctave: number | null;
  /** Short-term loudness (LUFS, null where silent) every `stepS`, from the master's own 0 s. */
  shortTerm: { stepS: number; values: (number | null)[] };
};

export type AlbumTrack = {
  trackId: string;
  position: number;
  title: string;
  /** Silence before this track, s (the first track's is not played). */
  gapBeforeS: number;
  /** Where the track starts on the album's timeline, s (null without a master). */
  startS: number | null;
  master: AlbumMaster | null;
  hints: Hint[];
};

export type AlbumView = {
  tracks: AlbumTrack[];
  durationS: number;
  curveStepS: number;
  medianLufs: number | null;
  medianTilt: number | null;
  /** Album loudness of the masters with their gaps; null with a reason when it cannot be measured. */
  loudness: (AlbumLoudness & { truePeakDbtp: number | null }) | null;
  loudnessNote: string | null;
};

const finiteOrNull = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : null);

/** The stored gaps, by track id, clamped to 0 … MAX_GAP_S. */
export async function getAlbumGaps(releaseId: string): Promise<Record<string, number>> {
  const row = await db("releases").where({ id: releaseId }).first<{ album_gaps: Record<string, unknown> } | undefined>("album_gaps");
  const out: Record<string, number> = {};
  for (const [k, v] of Object.entries(row?.album_gaps ?? {})) {
    const n = finiteOrNull(v);
    if (n !== null) out[k] = Math.min(MAX_GAP_S, Math.max(0, n));
  }
  return out;
}

/** Sets the silence before one track of the release (the caller has checked the track is the release's). */
export async function setAlbumGap(releaseId: string, trackId: string, gapS: number): Promise<void> {
  await db("releases")
    .where({ id: releaseId })
    .update({ album_gaps: db.raw("jsonb_set(album_gaps, ?::text[], to_jsonb(?::numeric))", [`{${trackId}}`, gapS]) });
}

function pickMaster(renders: ReviewableRender[], approvedRenderId: string | null): { render: ReviewableRender; approved: boolean } | null {
  const approved = approvedRenderId ? renders.find((r) => r.id === approvedRenderId) : undefined;
  if (approved) return { render: approved, approved: true };
  const newest = renders.find((r) => r.kind === "print") ?? renders[0];
  return newest ? { render: newest, approved: false } : null;
}

/** Downsamples a 10 ms short-term curve to one value (energy mean) every `stepS`. */
function downsample(values: readonly unknown[], gridMs: number, stepS: number): (number | null)[] {
  const per = Math.max(1, Math.round((stepS * 1000) / gridMs));
  const out: (number | null)[] = [];
  for (let i = 0; i < values.length; i += per) {
    let sum = 0;
    let n = 0;
    for (let j = i; j < Math.min(values.length, i + per); j++) {
      const v = finiteOrNull(values[j]);
      if (v !== null) sum += 10 ** (v / 10);
      n++;
    }
    out.push(sum > 0 ? Math.round(1000 * 10 * Math.log10(sum / n)) / 1000 : null);
  }
  return out;
}

const albumCache = new Map<string, Promise<AlbumLoudness>>();
const ALBUM_CACHE_SIZE = 50;

/** Album loudness of these masters and gaps, measured once per distinct set. */
async function albumLoudness(parts: { outputKey: string; gapBeforeS: number }[]): Promise<AlbumLoudness> {
  const key = JSON.stringify(parts);
  let pending = albumCache.get(key);
  if (!pending) {
    pending = (async () => {
      const files: LocalFile[] = [];
      try {
        for (const p of parts) files.push(await storage().localFile(p.outputKey));
        return await measureAlbum(files.map((f, i) => ({ path: f.path, gapBeforeS: parts[i].gapBeforeS })));
      } finally {
        for (const f of files) await f.release();
      }
    })();
    pending.catch(() => albumCache.delete(key));
    albumCache.set(key, pending);
    if (albumCache.size > ALBUM_CACHE_SIZE) albumCache.delete(albumCache.keys().next().value!);
  }
  return pending;
}

export async function loadAlbum(viewer: Viewer, releaseId: string, options: { measure?: boolean } = {}): Promise<AlbumView> {
  const tracks = await listTracks(releaseId);
  const gaps = await getAlbumGaps(releaseId);
  const reviews = await getTrackReviews(tracks.map((t) => t.id));
  const picked = await Promise.all(tracks.map(async (t) => pickMaster(await listReviewableRenders(viewer, t.id), reviews.get(t.id)?.approvedRenderId ?? null)));
  const ids = picked.flatMap((p) => (p ? [p.render.id] : []));
  const analyses = new Map<string, Record<string, unknown>>(
    ids.length === 0
      ? []
      : (await db("renders").whereIn("id", ids).select<{ id: string; output_analysis: Record<string, unknown> }[]>("id", "output_analysis")).map((r) => [r.id, r.output_analysis ?? {}]),
  );
  const durationOf = (a: Record<string, unknown> | undefined) =>
    finiteOrNull(a?.durationS) ?? (Array.isArray(a?.shortTermLufs) ? (a.shortTermLufs.length * (finiteOrNull(a.gridMs) ?? 10)) / 1000 : 0);
  const totalGuessS = picked.reduce((s, p) => s + (p ? durationOf(analyses.get(p.render.id)) + DEFAULT_GAP_S : 0), 0);
  const curveStepS = Math.max(MIN_CURVE_STEP_S, Math.ceil((totalGuessS / MAX_CURVE_POINTS) * 2) / 2);

  let clock = 0;
  let first = true;
  const out: AlbumTrack[] = tracks.map((t, i) => {
    const gapBeforeS = gaps[t.id] ?? DEFAULT_GAP_S;
    const p = picked[i];
    if (!p) return { trackId: t.id, position: t.position, title: t.title, gapBeforeS, startS: null, master: null, hints: [] };
    const a = analyses.get(p.render.id) ?? {};
    const durationS = durationOf(a);
    if (!first) clock += gapBeforeS;
    first = false;
    const startS = clock;
    clock += durationS;
    const integratedLufs = finiteOrNull(a.integratedLufs);
    const truePeakDbtp = finiteOrNull(a.truePeakDbtp);
    const spectrum = spectrumOf(a);
    return {
      trackId: t.id,
      position: t.position,
      title: t.title,
      gapBeforeS,
      startS,
      hints: [],
      master: {
        renderId: p.render.id,
        kind: p.render.kind,
        approved: p.approved,
        audioUrl: `/renders/${p.render.id}/audio`,
        durationS,
        sampleRateHz: finiteOrNull(a.sampleRate),
        integratedLufs,
        loudnessRangeLu: finiteOrNull(a.loudnessRangeLu),
        truePeakDbtp,
        plrDb: integratedLufs !== null && truePeakDbtp !== null ? truePeakDbtp - integratedLufs : null,
        correlation: finiteOrNull(a.correlation),
        spectrum,
        tiltDbPerOctave: spectralTiltDbPerOctave(spectrum),
        shortTerm: { stepS: curveStepS, values: Array.isArray(a.shortTermLufs) ? downsample(a.shortTermLufs, finiteOrNull(a.gridMs) ?? 10, curveStepS) : [] },
      },
    };
  });
  const withMaster = out.filter((t) => t.master);
  const { hints, medianLufs, medianTilt } = consistencyHints(withMaster.map((t) => ({ integratedLufs: t.master!.integratedLufs, tiltDbPerOctave: t.master!.tiltDbPerOctave })));
  withMaster.forEach((t, i) => (t.hints = hints[i]));

  let loudness: AlbumView["loudness"] = null;
  let loudnessNote: string | null = null;
  if (withMaster.length === 0) loudnessNote = "No track has a master yet.";
  else if (options.measure !== false) {
    try {
      const parts = withMaster.map((t, i) => ({ outputKey: picked[out.indexOf(t)]!.render.outputKey, gapBeforeS: i === 0 ? 0 : t.gapBeforeS }));
      const measured = await albumLoudness(parts);
      const peaks = withMaster.map((t) => t.master!.truePeakDbtp).filter((v): v is number => v !== null);
      loudness = { ...measured, truePeakDbtp: peaks.length ? Math.max(...peaks) : null };
      if (withMaster.length < out.length) loudnessNote = `${out.length - withMaster.length} of ${out.length} tracks have no master yet and are left out.`;
    } catch (error) {
      loudnessNote = `The album's loudness could not be measured: ${(error as Error).message}.`;
    }
  }
  return { tracks: out, durationS: clock, curveStepS, medianLufs, medianTilt, loudness, loudnessNote };
}

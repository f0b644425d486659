// The sources a viewer may compare on a track: its finished renders the
// viewer may hear (app/models/review.server.ts decides which) and, for the
// studio's staff only, its mix versions (clients get renders, never the
// originals). Each comes with what the page needs: a label, where its 0 s
// sits on the mix's time axis, its integrated loudness for level matching,
// the URL its audio streams from, and on demand its analysis and traces.
import { Readable } from "node:stream";
import { db } from "../lib/db.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { isStaff } from "../lib/roles.ts";
import type { RenderTraces } from "../lib/compare/traces.ts";
import { formatSourceKey, type SourceType } from "../lib/compare/sources.ts";
import { formatClock } from "../components/player/format.ts";
import { getMix, listMixVersions, type Mix } from "./mix.server.ts";
import { listReviewableRenders, type ReviewableRender, type Viewer } from "./review.server.ts";
import { getReference, listReferences, type ReferenceTrack } from "./reference.server.ts";
import { loudestWindow } from "../../dsp/render/loudest-window.ts";

export type CompareSource = {
  key: string;
  type: SourceType;
  id: string;
  /** A render's mix, or the mix itself. */
  mixId: string;
  label: string;
  /** Where the source's 0 s sits on the mix's time axis: a preview's region start, else 0. */
  offsetS: number;
  integratedLufs: number | null;
  sentForReview: boolean;
  audioUrl: string;
  render: ReviewableRender | null;
  /** A mix source's row; its analysis without the short-term curve (sourceTraces reads that). */
  mix: Mix | null;
  /** A reference track's row (staff only), likewise without its curve. */
  reference?: ReferenceTrack | null;
};

const finiteOrNull = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : null);

const when = (d: Date) => `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;

/**
 * "Preview 0:30.0–1:00.0 · mix v2 · Gentle master r3" for staff; a client,
 * who does not see the studio's chains, tells two versions apart by when
 * they were finished instead.
 */
export const renderLabel = (r: Pick<ReviewableRender, "kind" | "region" | "mixVersion" | "revision" | "chainName" | "finishedAt">, staff: boolean) =>
  `${r.kind === "print" ? "Print" : `Preview ${formatClock(r.region?.startS ?? 0)}–${formatClock(r.region?.endS ?? 0)}`} · mix v${r.mixVersion} · ${staff ? `${r.chainName} r${r.revision}` : when(r.finishedAt)}`;

export const mixLabel = (m: Pick<Mix, "version" | "originalName">) => `Mix v${m.version} · ${m.originalName}`;

export const referenceLabel = (r: Pick<ReferenceTrack, "originalName">) => `Reference · ${r.originalName}`;

/** Renders newest first, then (staff) mixes newest first, then (staff) the release's analysed references. */
export async function listCompareSources(viewer: Viewer, track: { id: string; releaseId: string }): Promise<CompareSource[]> {
  const renders = await listReviewableRenders(viewer, track.id);
  const mixes = isStaff(viewer.role) ? await listMixVersions(track.id) : [];
  const references = isStaff(viewer.role) ? (await listReferences(track.releaseId)).filter((r) => r.analysisState === "done") : [];
  return [
    ...renders.map(
      (r): CompareSource => ({
        key: formatSourceKey({ type: "render", id: r.id }),
        type: "render",
        id: r.id,
        mixId: r.mixId,
        label: renderLabel(r, isStaff(viewer.role)),
        offsetS: r.region?.startS ?? 0,
        integratedLufs: r.integratedLufs,
        sentForReview: r.sentForReview,
        audioUrl: `/renders/${r.id}/audio`,
        render: r,
        mix: null,
      }),
    ),
    ...mixes.map(
      (m): CompareSource => ({
        key: formatSourceKey({ type: "mix", id: m.id }),
        type: "mix",
        id: m.id,
        mixId: m.id,
        label: mixLabel(m),
        offsetS: 0,
        integratedLufs: m.analysisState === "done" ? finiteOrNull((m.analysis as { integratedLufs?: unknown } | null)?.integratedLufs) : null,
        sentForReview: false,
        // The staff download route answers byte ranges, which the player's progressive loading uses.
        audioUrl: `/releases/${track.releaseId}/tracks/${track.id}/mixes/${m.id}/download`,
        render: null,
        mix: m,
      }),
    ),
    ...references.map(
      (r): CompareSource => ({
        key: formatSourceKey({ type: "reference", id: r.id }),
        type: "reference",
        id: r.id,
        mixId: r.id,
        label: referenceLabel(r),
        offsetS: 0, // set by alignReference for the pair compared
        integratedLufs: finiteOrNull((r.analysis as { integratedLufs?: unknown } | null)?.integratedLufs),
        sentForReview: false,
        audioUrl: `/releases/${track.releaseId}/references/${r.id}/audio`,
        render: null,
        mix: null,
        reference: r,
      }),
    ),
  ];
}

/** The figures of a source's analysis: a render's output, or the mix's own (without its curve). */
export type SourceAnalysis = Partial<
  Record<"integratedLufs" | "loudnessRangeLu" | "truePeakDbtp" | "samplePeakDbfs" | "maxShortTermLufs" | "maxMomentaryLufs" | "correlation", number | null>
>;

const ANALYSIS_FIELDS = ["integratedLufs", "loudnessRangeLu", "truePeakDbtp", "samplePeakDbfs", "maxShortTermLufs", "maxMomentaryLufs", "correlation"] as const;

function figures(analysis: unknown): SourceAnalysis | null {
  if (!analysis || typeof analysis !== "object") return null;
  const out: SourceAnalysis = {};
  for (const field of ANALYSIS_FIELDS) out[field] = finiteOrNull((analysis as Record<string, unknown>)[field]);
  return out;
}

export async function sourceAnalysis(source: CompareSource): Promise<SourceAnalysis | null> {
  if (source.type === "render") {
    const row = await db("renders").where({ id: source.id }).first<{ analysis: unknown } | undefined>(db.raw("output_analysis - 'shortTermLufs' AS analysis"));
    return figures(row?.analysis);
  }
  if (source.type === "reference") return figures(source.reference?.analysis);
  return source.mix?.analysisState === "done" ? figures(source.mix.analysis) : null;
}

export type SpectrumBands = Array<{ centreHz: number; levelDb: number | null }>;

/** Stored third-octave bands of an analysis, or null (analysed before spectra were measured). */
export function spectrumOf(analysis: unknown): SpectrumBands | null {
  const bands = (analysis as { thirdOctave?: unknown } | null)?.thirdOctave;
  if (!Array.isArray(bands) || bands.length === 0) return null;
  return bands.map((b: { centreHz?: unknown; levelDb?: unknown }) => ({ centreHz: Number(b.centreHz), levelDb: finiteOrNull(b.levelDb) }));
}

/** A source's long-term spectrum: a render's output, a mix's or a reference's own analysis. */
export async function sourceSpectrum(source: CompareSource): Promise<SpectrumBands | null> {
  if (source.type === "render") {
    const row = await db("renders").where({ id: source.id }).first<{ bands: unknown } | undefined>(db.raw("output_analysis -> 'thirdOctave' AS bands"));
    return spectrumOf({ thirdOctave: row?.bands });
  }
  if (source.type === "reference") return spectrumOf(source.reference?.analysis);
  return source.mix?.analysisState === "done" ? spectrumOf(source.mix.analysis) : null;
}

export const ALIGN_WINDOW_S = 30;

/**
 * Where a reference's 0 s sits on the master's time axis so the two line up:
 * at the points picked (`at`: master's axis, reference's own time), else at
 * the start of the loudest 30 s of each (by short-term loudness, as previews
 * choose their region). Null when a curve is missing.
 */
export async function referenceOffsetS(
  master: CompareSource,
  reference: CompareSource,
  at?: { masterS: number; referenceS: number } | null,
): Promise<{ offsetS: number; masterS: number; referenceS: number } | null> {
  if (at) return { offsetS: at.masterS - at.referenceS, ...at };
  const [tm, tr] = await Promise.all([sourceTraces(master), sourceTraces(reference)]);
  if (!tm?.shortTermLufs?.length || !tr?.shortTermLufs?.length) return null;
  const loudest = (t: RenderTraces) => {
    const curve = (t.shortTermLufs ?? []).map((v) => (typeof v === "number" ? v : -Infinity));
    return loudestWindow(curve, t.gridMs, (curve.length * t.gridMs) / 1000, ALIGN_WINDOW_S).startS;
  };
  const masterS = master.offsetS + loudest(tm);
  const referenceS = loudest(tr);
  return { offsetS: masterS - referenceS, masterS, referenceS };
}

async function readStoredTraces(key: string | null): Promise<RenderTraces | null> {
  if (!key) return null;
  try {
    const stream = await storage().get(key);
    const text = await new Response(Readable.toWeb(stream) as ReadableStream<Uint8Array>).text();
    const parsed = JSON.parse(text) as RenderTraces;
    return Array.isArray(parsed?.stages) && typeof parsed.gridMs === "number" ? parsed : null;
  } catch {
    return null; // Traces are a help, not a requirement: the player works without them.
  }
}

/**
 * A source's traces: a render's stored gain reduction and short-term
 * loudness; for a mix, no stages (nothing processed it) and the short-term
 * curve of its analysis.
 */
export async function sourceTraces(source: CompareSource): Promise<RenderTraces | null> {
  if (source.type === "render") return readStoredTraces(source.render?.tracesKey ?? null);
  const row = source.type === "reference" ? (source.reference ? await getReference(source.reference.releaseId, source.id) : undefined) : await getMix(source.id);
  const analysis = row?.analysisState === "done" ? (row.analysis as { gridMs?: unknown; shortTermLufs?: unknown } | null) : null;
  if (!analysis || typeof analysis.gridMs !== "number" || !Array.isArray(analysis.shortTermLufs)) return null;
  return { gridMs: analysis.gridMs, stages: [], shortTermLufs: analysis.shortTermLufs as (number | null)[] };
}

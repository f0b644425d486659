// Read models for the track and render pages: renders with their mix version
// and chain name, and the chains a render may use (the track's own and the
// studio's templates, each at its latest revision).
import { db } from "./db.server.ts";
import { rendersWithRelease, whereRenderVisible, type RenderViewer } from "./render-visibility.server.ts";
import { listTemplates, listTrackChains, type Chain } from "../models/chain.server.ts";
import type { RenderKind, RenderState } from "../models/render.server.ts";

export type RenderListItem = {
  id: string;
  kind: RenderKind;
  state: RenderState;
  progress: number;
  mixVersion: number;
  chainName: string;
  chainRevision: number;
  region: { startS: number; endS: number } | null;
  targetLufs: number | null;
  queuedAt: string;
  error: string | null;
  /** When it finished (ISO), and what the worker measured on its output. */
  finishedAt: string | null;
  outputLufs: number | null;
  outputTruePeakDbtp: number | null;
  /** Sent to the client for review; approved by the client; the source of a delivered file. */
  sent: boolean;
  approved: boolean;
  inDelivery: boolean;
};

const finite = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : null);

/** The track's renders this viewer may see (render-visibility.server.ts), newest first. */
export async function listTrackRenders(trackId: string, viewer: RenderViewer): Promise<RenderListItem[]> {
  const query = rendersWithRelease()
    .join("chain_revisions as cr", "cr.id", "rd.chain_revision_id")
    .join("chains as c", "c.id", "cr.chain_id")
    .where("m.track_id", trackId)
    .orderBy("rd.queued_at", "desc")
    .select(
      "rd.id", "rd.kind", "rd.state", "rd.progress", "rd.region_start_s", "rd.region_end_s", "rd.target_lufs", "rd.queued_at", "rd.error",
      "m.version as mix_version", "c.name as chain_name", "cr.revision as chain_revision",
      "rd.finished_at", "rd.output_analysis",
      db.raw("EXISTS (SELECT 1 FROM review_requests rq WHERE rq.render_id = rd.id) AS sent"),
      db.raw("EXISTS (SELECT 1 FROM review_events re WHERE re.render_id = rd.id AND re.kind = 'approve') AS approved"),
      db.raw("EXISTS (SELECT 1 FROM deliveries d WHERE d.source_render_id = rd.id) AS in_delivery"),
    );
  const rows: Record<string, any>[] = await whereRenderVisible(query, viewer);
  return rows.map((row) => ({
    id: row.id,
    kind: row.kind,
    state: row.state,
    progress: row.progress,
    mixVersion: row.mix_version,
    chainName: row.chain_name,
    chainRevision: row.chain_revision,
    region: row.region_start_s === null ? null : { startS: row.region_start_s, endS: row.region_end_s },
    targetLufs: row.target_lufs,
    queuedAt: new Date(row.queued_at).toISOString(),
    error: row.error,
    finishedAt: row.finished_at ? new Date(row.finished_at).toISOString() : null,
    outputLufs: finite(row.output_analysis?.integratedLufs),
    outputTruePeakDbtp: finite(row.output_analysis?.truePeakDbtp),
    sent: Boolean(row.sent),
    approved: Boolean(row.approved),
    inDelivery: Boolean(row.in_delivery),
  }));
}

export type ChainChoice = { revisionId: string; label: string; template: boolean };

/** Chains with at least one revision; a chain without one cannot render yet. */
export async function listChainChoices(studioId: string, trackId: string): Promise<ChainChoice[]> {
  const [own, templates] = await Promise.all([listTrackChains(trackId), listTemplates(studioId)]);
  const chains: (Chain & { template: boolean })[] = [...own.map((c) => ({ ...c, template: false })), ...templates.map((c) => ({ ...c, template: true }))];
  if (chains.length === 0) return [];
  const latest = await db("chain_revisions")
    .whereIn("chain_id", chains.map((c) => c.id))
    .distinctOn("chain_id")
    .orderBy([{ column: "chain_id" }, { column: "revision", order: "desc" }])
    .select<{ id: string; chain_id: string; revision: number }[]>("id", "chain_id", "revision");
  const byChain = new Map(latest.map((r) => [r.chain_id, r]));
  return chains.flatMap((c) => {
    const rev = byChain.get(c.id);
    return rev ? [{ revisionId: rev.id, label: `${c.name} · rev ${rev.revision}${c.template ? " (template)" : ""}`, template: c.template }] : [];
  });
}

/** The chain name and revision number of a render's revision. */
export async function describeRevision(revisionId: string): Promise<{ chainName: string; revision: number; chainId: string } | undefined> {
  const row = await db("chain_revisions as cr")
    .join("chains as c", "c.id", "cr.chain_id")
    .where("cr.id", revisionId)
    .first<{ name: string; revision: number; chain_id: string } | undefined>("c.name", "cr.revision", "cr.chain_id");
  return row && { chainName: row.name, revision: row.revision, chainId: row.chain_id };
}

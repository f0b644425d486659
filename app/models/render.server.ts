// Renders: a mix version through a chain revision, as a preview (a region,
// or the loudest 30 s when none is given) or a print (the whole mix),
// optionally to a loudness target. The row is the truth about its state;
// the queue job only says which worker may work on it.
import { db } from "../lib/db.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { cancelJob, enqueueRender, queueSettings } from "../lib/queue.server.ts";
import { rendersWithRelease, whereRenderVisible, type RenderViewer } from "../lib/render-visibility.server.ts";
import { keysetPage, type Page } from "../lib/keyset.server.ts";
import { PREVIEW_WINDOW_S, type RenderResult } from "../../dsp/render/render-file.ts";

export type RenderState = "queued" | "running" | "done" | "failed" | "cancelled";
export type RenderKind = "preview" | "print";

/** The length of a preview when no region is chosen (the loudest stretch of the mix). */
export const PREVIEW_SECONDS = PREVIEW_WINDOW_S;

/** The gain-reduction traces of a finished render, as the renderer gave them (JSON from storage). */
export type RenderTraces = RenderResult["traces"];

export type Render = {
  id: string;
  mixId: string;
  chainRevisionId: string;
  kind: RenderKind;
  region: { startS: number; endS: number } | null;
  targetLufs: number | null;
  state: RenderState;
  progress: number;
  error: string | null;
  attempts: number;
  queuedAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
  inputAnalysis: unknown;
  outputAnalysis: unknown;
  tracesKey: string | null;
  output: { key: string; sizeBytes: number; sampleRateHz: number; channels: number; bitDepth: number; sampleFormat: "int" | "float" } | null;
  jobId: string | null;
  createdBy: string | null;
};

export type RenderRow = {
  id: string;
  mix_id: string;
  chain_revision_id: string;
  kind: RenderKind;
  region_start_s: number | null;
  region_end_s: number | null;
  target_lufs: number | null;
  state: RenderState;
  progress: number;
  error: string | null;
  attempts: number;
  queued_at: Date;
  started_at: Date | null;
  finished_at: Date | null;
  input_analysis: unknown;
  output_analysis: unknown;
  traces_key: string | null;
  output_key: string | null;
  output_size_bytes: string | number | null;
  output_sample_rate_hz: number | null;
  output_channels: number | null;
  output_bit_depth: number | null;
  output_sample_format: "int" | "float" | null;
  job_id: string | null;
  created_by: string | null;
};

const STATUS_COLUMNS = ["id", "state", "progress", "error", "attempts", "queued_at", "started_at", "finished_at"] as const;
type StatusRow = Pick<RenderRow, (typeof STATUS_COLUMNS)[number]>;

function statusFromRow(row: StatusRow): RenderStatus {
  return {
    id: row.id,
    state: row.state,
    progress: row.progress,
    error: row.error,
    attempts: row.attempts,
    queuedAt: row.queued_at,
    startedAt: row.started_at,
    finishedAt: row.finished_at,
  };
}

export function renderFromRow(row: RenderRow): Render {
  return {
    ...statusFromRow(row),
    mixId: row.mix_id,
    chainRevisionId: row.chain_revision_id,
    kind: row.kind,
    region: row.region_start_s === null || row.region_end_s === null ? null : { startS: row.region_start_s, endS: row.region_end_s },
    targetLufs: row.target_lufs,
    inputAnalysis: row.input_analysis,
    outputAnalysis: row.output_analysis,
    tracesKey: row.traces_key,
    output: row.output_key
      ? {
          key: row.output_key,
          sizeBytes: Number(row.output_size_bytes),
          sampleRateHz: row.output_sample_rate_hz!,
          channels: row.output_channels!,
          bitDepth: row.output_bit_depth!,
          sampleFormat: row.output_sample_format!,
        }
      : null,
    jobId: row.job_id,
    createdBy: row.created_by,
  };
}

export type NewRender = {
  mixId: string;
  chainRevisionId: string;
  kind: RenderKind;
  region?: { startS: number; endS: number } | null;
  targetLufs?: number | null;
  createdBy?: string | null;
};

/** Creates the render row and queues its job. */
export async function createRender(input: NewRender): Promise<Render> {
  if (input.kind === "print" && input.region) throw new Error("a print renders the whole mix; only a preview has a region");
  const mix = await db("mixes").where({ id: input.mixId }).first<{ frames: string; sample_rate_hz: number } | undefined>("frames", "sample_rate_hz");
  if (!mix) throw new Error(`mix ${input.mixId} does not exist`);
  const [row] = await db("renders")
    .insert({
      mix_id: input.mixId,
      chain_revision_id: input.chainRevisionId,
      kind: input.kind,
      region_start_s: input.region?.startS ?? null,
      region_end_s: input.region?.endS ?? null,
      target_lufs: input.targetLufs ?? null,
      created_by: input.createdBy ?? null,
    })
    .returning<RenderRow[]>("*");
  const mixSeconds = Number(mix.frames) / mix.sample_rate_hz;
  const audioSeconds =
    input.kind === "print" ? mixSeconds : input.region ? input.region.endS - input.region.startS : Math.min(PREVIEW_SECONDS, mixSeconds);
  // A loudness target takes a few passes (the renderer's search usually ends
  // by the third), a preview without a region one analysis pass to find the loudest 30 s.
  const passes = (input.targetLufs != null ? 4 : 1) + (input.kind === "preview" && !input.region ? 1 : 0);
  try {
    const jobId = await enqueueRender(row.id, audioSeconds, passes);
    // Only while still queued: a fast worker may already have claimed it and set job_id itself.
    await db("renders").where({ id: row.id }).whereNull("job_id").update({ job_id: jobId });
  } catch (error) {
    await db("renders")
      .where({ id: row.id })
      .update({ state: "failed", error: `The render could not be queued: ${(error as Error).message}`, finished_at: db.fn.now() });
  }
  return (await getRender(row.id))!;
}

export async function getRender(id: string): Promise<Render | undefined> {
  const row = await db("renders").where({ id }).first<RenderRow | undefined>("*");
  return row && renderFromRow(row);
}

export type RenderStatus = Pick<Render, "id" | "state" | "progress" | "error" | "attempts" | "queuedAt" | "startedAt" | "finishedAt">;

/** Only what a progress bar needs: cheap to poll, without the analyses. */
export async function getRenderStatus(id: string): Promise<RenderStatus | undefined> {
  const row = await db("renders").where({ id }).first<StatusRow | undefined>(...STATUS_COLUMNS);
  return row && statusFromRow(row);
}

/** A track's renders over all its mix versions, newest first. */
/** A track's renders, newest first; with a viewer, only those the visibility rule lets them see. */
export async function listRendersForTrack(trackId: string, viewer?: RenderViewer, page?: Page): Promise<(Render & { mixVersion: number })[]> {
  const query = rendersWithRelease()
    .where({ "m.track_id": trackId })
    .orderBy("rd.queued_at", "desc")
    .select<(RenderRow & { mix_version: number })[]>("rd.*", "m.version as mix_version");
  if (viewer) whereRenderVisible(query, viewer);
  if (page) keysetPage(query, page, { table: "renders", at: "rd.queued_at", id: "rd.id", column: "queued_at" });
  const rows = await query;
  return rows.map((row) => ({ ...renderFromRow(row), mixVersion: row.mix_version }));
}

/** A finished render's traces, read from storage; undefined before it is done. */
export async function getRenderTraces(render: Pick<Render, "tracesKey">): Promise<RenderTraces | undefined> {
  if (!render.tracesKey) return undefined;
  const chunks: Buffer[] = [];
  for await (const chunk of await storage().get(render.tracesKey)) chunks.push(Buffer.from(chunk));
  return JSON.parse(Buffer.concat(chunks).toString("utf8")) as RenderTraces;
}

/**
 * Cancels a render that has not finished. A queued job is cancelled in the
 * queue; a running one notices the row's state at its next progress report
 * and stops. Returns the render as it is afterwards (a finished render is
 * returned unchanged).
 */
export async function cancelRender(id: string): Promise<Render | undefined> {
  const [row] = await db("renders")
    .where({ id })
    .whereIn("state", ["queued", "running"])
    .update({ state: "cancelled", finished_at: db.fn.now(), error: null })
    .returning<RenderRow[]>("*");
  if (row?.job_id) {
    // Best effort: a worker that already holds the job sees the row instead.
    await cancelJob(queueSettings().renderQueue, row.job_id).catch(() => {});
  }
  return row ? renderFromRow(row) : getRender(id);
}

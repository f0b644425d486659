// Delivery formats (studio defaults, or a release's own), delivered files,
// and what is built from them: the loudness report and the release package.
// A release with formats of its own uses only those; otherwise the studio's
// defaults, which are written from DEFAULT_DELIVERY_FORMATS the first time a
// studio without any is asked for them.
import type { Knex } from "knex";
import type { Readable } from "node:stream";
import { db } from "../lib/db.server.ts";
import { checkDeliveryFormat, type DeliveryFormat } from "../../dsp/delivery/delivery-format.ts";
import { DEFAULT_DELIVERY_FORMATS, type NamedDeliveryFormat } from "../lib/delivery/default-formats.ts";
import { trackFileName, uniqueFolderNames } from "../lib/delivery/file-names.ts";
import { buildLoudnessReport, loudnessReportCsv, type DeliveryMeasures, type LoudnessReport } from "../lib/delivery/loudness-report.ts";
import { streamReleasePackage, type PackageFile } from "../lib/delivery/release-package.server.ts";
import { deliveryWarnings, type DeliveredFile } from "../lib/delivery/warnings.ts";
import { storage as sharedStorage, type StorageDriver } from "../lib/storage/storage.server.ts";
import { releaseDeliveryPlan, type TrackDeliveryPlan } from "./delivery-plan.server.ts";
import { getStudioSettings } from "./studio-settings.server.ts";
import { createRender } from "./render.server.ts";

type Conn = Knex | Knex.Transaction;

export type StoredFormat = NamedDeliveryFormat & { id: string; studioId: string; releaseId: string | null; position: number };

type FormatRow = {
  id: string;
  studio_id: string;
  release_id: string | null;
  name: string;
  sample_rate_hz: number;
  bit_depth: "16" | "24" | "32f";
  dither: "tpdf" | "none";
  ceiling_dbtp: number;
  target_lufs: number | null;
  position: number;
};

function formatFromRow(r: FormatRow): StoredFormat {
  return {
    id: r.id,
    studioId: r.studio_id,
    releaseId: r.release_id,
    position: r.position,
    name: r.name,
    sampleRate: r.sample_rate_hz as DeliveryFormat["sampleRate"],
    bitDepth: r.bit_depth === "32f" ? "32f" : (Number(r.bit_depth) as 16 | 24),
    dither: r.dither,
    ceilingDbtp: r.ceiling_dbtp,
    ...(r.target_lufs !== null ? { targetLufs: r.target_lufs } : {}),
  };
}

function formatValues(f: NamedDeliveryFormat) {
  checkDeliveryFormat(f);
  const name = f.name.trim();
  if (name.length < 1 || name.length > 80) throw new RangeError("a format's name must be 1 to 80 characters");
  return {
    name,
    sample_rate_hz: f.sampleRate,
    bit_depth: String(f.bitDepth),
    dither: f.dither,
    ceiling_dbtp: f.ceilingDbtp,
    target_lufs: f.targetLufs ?? null,
  };
}

/** The studio's default formats, written from the built-in defaults when it has none. */
export async function studioFormats(studioId: string, conn: Conn = db): Promise<StoredFormat[]> {
  const rows = await conn<FormatRow>("delivery_formats").where({ studio_id: studioId }).whereNull("release_id").orderBy("position");
  if (rows.length > 0) return rows.map(formatFromRow);
  const values = DEFAULT_DELIVERY_FORMATS.map((f, i) => ({ ...formatValues(f), studio_id: studioId, release_id: null, position: i + 1 }));
  // Two first requests at once: the name index lets only one set in.
  const inserted = await conn("delivery_formats").insert(values).onConflict(conn.raw("(studio_id, lower(name)) WHERE release_id IS NULL")).ignore().returning<FormatRow[]>("*");
  if (inserted.length === values.length) return inserted.map(formatFromRow);
  return (await conn<FormatRow>("delivery_formats").where({ studio_id: studioId }).whereNull("release_id").orderBy("position")).map(formatFromRow);
}

/** The formats a release is delivered in: its own, or else the studio's defaults. */
export async function releaseFormats(releaseId: string, conn: Conn = db): Promise<StoredFormat[]> {
  const own = await conn<FormatRow>("delivery_formats").where({ release_id: releaseId }).orderBy("position");
  if (own.length > 0) return own.map(formatFromRow);
  const release = await conn("releases").where({ id: releaseId }).first<{ studio_id: string } | undefined>("studio_id");
  if (!release) return [];
  return studioFormats(release.studio_id, conn);
}

/** Adds a format at the end of the studio's defaults (releaseId null) or of a release's own list. */
export async function addFormat(studioId: string, releaseId: string | null, format: NamedDeliveryFormat, conn: Conn = db): Promise<StoredFormat> {
  const scope = conn("delivery_formats").where({ studio_id: studioId });
  if (releaseId) scope.where({ release_id: releaseId });
  else scope.whereNull("release_id");
  const last = await scope.max<{ max: number | null }>("position as max").first();
  const [row] = await conn("delivery_formats")
    .insert({ ...formatValues(format), studio_id: studioId, release_id: releaseId, position: (last?.max ?? 0) + 1 })
    .returning<FormatRow[]>("*");
  return formatFromRow(row!);
}

export type DeliveryState = "queued" | "running" | "done" | "failed";

/** A delivery to make: a track's print in one format. The format is copied so the row outlives edits. */
export async function createDelivery(input: { trackId: string; formatId: string; sourceRenderId: string }, conn: Conn = db): Promise<string> {
  const format = await conn<FormatRow>("delivery_formats").where({ id: input.formatId }).first();
  if (!format) throw new Error("no such delivery format");
  const track = await conn("tracks").where({ id: input.trackId }).first<{ release_id: string } | undefined>("release_id");
  if (!track) throw new Error("no such track");
  if (format.release_id !== null && format.release_id !== track.release_id) throw new Error("the format belongs to another release");
  const [row] = await conn("deliveries")
    .insert({ release_id: track.release_id, track_id: input.trackId, format_id: input.formatId, format: JSON.stringify(formatFromRow(format)), source_render_id: input.sourceRenderId })
    .returning<{ id: string }[]>("id");
  return row!.id;
}

/** Records the delivered file and its measures; the warnings are worked out here. Returns them. */
export async function completeDelivery(
  id: string,
  result: { storageKey: string; sizeBytes: number; analysis: DeliveryMeasures & Record<string, unknown>; file?: DeliveredFile },
  conn: Conn = db,
): Promise<string[]> {
  const row = await conn("deliveries").where({ id }).first<{ format: NamedDeliveryFormat } | undefined>("format");
  if (!row) throw new Error("no such delivery");
  const warnings = deliveryWarnings(row.format, result.analysis, result.file);
  // JSON has no infinity: a silent file's −∞ loudness is stored as null.
  const analysis = JSON.stringify(result.analysis, (_k, v) => (typeof v === "number" && !Number.isFinite(v) ? null : v));
  await conn("deliveries")
    .where({ id })
    .update({ state: "done", storage_key: result.storageKey, size_bytes: result.sizeBytes, analysis, warnings: JSON.stringify(warnings), error: null, finished_at: conn.fn.now() });
  return warnings;
}

export async function failDelivery(id: string, message: string, conn: Conn = db): Promise<void> {
  await conn("deliveries").where({ id }).update({ state: "failed", error: message.slice(0, 2000), finished_at: conn.fn.now() });
}

export type FinishedDelivery = {
  id: string;
  trackId: string;
  formatId: string;
  storageKey: string;
  sizeBytes: number;
  analysis: DeliveryMeasures;
  warnings: string[];
};

/** The newest finished delivery of every track in every format of the release. */
export async function latestDeliveries(releaseId: string, conn: Conn = db): Promise<FinishedDelivery[]> {
  const rows = await conn
    .select(conn.raw(`DISTINCT ON (track_id, format_id) id, track_id, format_id, storage_key, size_bytes, analysis, warnings`))
    .from("deliveries")
    .where({ release_id: releaseId, state: "done" })
    .whereNotNull("format_id")
    .orderBy([{ column: "track_id" }, { column: "format_id" }, { column: "finished_at", order: "desc" }, { column: "created_at", order: "desc" }]);
  const measure = (v: unknown) => (typeof v === "number" ? v : Number.NEGATIVE_INFINITY);
  return rows.map((r: Record<string, any>) => ({
    id: r.id,
    trackId: r.track_id,
    formatId: r.format_id,
    storageKey: r.storage_key,
    sizeBytes: Number(r.size_bytes),
    analysis: { integratedLufs: measure(r.analysis?.integratedLufs), loudnessRangeLu: measure(r.analysis?.loudnessRangeLu), truePeakDbtp: measure(r.analysis?.truePeakDbtp), reconstructedPeakDb: measure(r.analysis?.reconstructedPeakDb) },
    warnings: r.warnings,
  }));
}

async function releaseParts(releaseId: string, conn: Conn) {
  const release = await conn("releases").where({ id: releaseId }).first<{ studio_id: string } | undefined>("studio_id");
  if (!release) throw new Error("no such release");
  const [tracks, formats, deliveries, settings] = await Promise.all([
    conn("tracks").where({ release_id: releaseId }).orderBy("position").select("id as trackId", "position", "title", "isrc"),
    releaseFormats(releaseId, conn),
    latestDeliveries(releaseId, conn),
    getStudioSettings(release.studio_id, conn),
  ]);
  return { tracks: tracks as { trackId: string; position: number; title: string; isrc: string | null }[], formats, deliveries, settings };
}

export async function loudnessReport(releaseId: string, conn: Conn = db): Promise<LoudnessReport> {
  const { tracks, formats, deliveries, settings } = await releaseParts(releaseId, conn);
  return buildLoudnessReport({ tracks, formats: formats.map((f) => ({ formatId: f.id, name: f.name })), deliveries, references: settings.normalisationReferences });
}

/**
 * The zip of the release's finished deliveries and its loudness report, as a
 * stream. Callers check access and payment first (isReleasePaid for clients).
 */
export async function releasePackage(releaseId: string, options: { storage?: StorageDriver } = {}, conn: Conn = db): Promise<{ stream: Readable; files: string[] }> {
  const { tracks, formats, deliveries, settings } = await releaseParts(releaseId, conn);
  const report = buildLoudnessReport({ tracks, formats: formats.map((f) => ({ formatId: f.id, name: f.name })), deliveries, references: settings.normalisationReferences });
  const folders = uniqueFolderNames(formats.map((f) => f.name));
  const byKey = new Map(deliveries.map((d) => [`${d.trackId} ${d.formatId}`, d]));
  const files: PackageFile[] = [];
  formats.forEach((format, i) => {
    for (const track of tracks) {
      const d = byKey.get(`${track.trackId} ${format.id}`);
      if (d) files.push({ path: `${folders[i]}/${trackFileName(track.position, track.title)}`, storageKey: d.storageKey, sizeBytes: d.sizeBytes });
    }
  });
  const stream = streamReleasePackage({ files, reportCsv: loudnessReportCsv(report) }, options.storage ?? sharedStorage());
  return { stream, files: files.map((f) => f.path) };
}

/**
 * Queues a delivery of every approved track in every format of the release,
 * each from the print of the recipe the client approved (releaseDeliveryPlan).
 * A track approved with no print yet gets one rendered now: its deliveries
 * are made but wait for it (`waitingOnPrint`), and the render job queues them
 * when the print is done. A file already made, or on its way, from the same
 * print in the same format is not made again (counted in alreadyMade). Tracks
 * left out are returned with the reason. Returns the ids of the deliveries to
 * queue now (to hand to makeDelivery, in a worker).
 */
export async function queueReleaseDeliveries(
  releaseId: string,
  conn: Knex = db,
  options: { createdBy?: string | null } = {},
): Promise<{ deliveryIds: string[]; alreadyMade: number; leftOut: TrackDeliveryPlan[]; waitingOnPrint: string[]; printsQueued: number }> {
  const formats = await releaseFormats(releaseId, conn);
  const plan = await releaseDeliveryPlan(releaseId, conn);
  // Approved with no print: render it (outside the transaction: createRender queues its job).
  let printsQueued = 0;
  const sources = new Map<string, string>();
  for (const p of plan) {
    if (p.sourceRenderId) sources.set(p.trackId, p.sourceRenderId);
    else if (p.printInProgressId) sources.set(p.trackId, p.printInProgressId);
    else if (p.printRecipe) {
      const print = await createRender({ ...p.printRecipe, kind: "print", createdBy: options.createdBy ?? null });
      sources.set(p.trackId, print.id);
      printsQueued++;
    }
  }
  const deliveryIds: string[] = [];
  const waitingOnPrint: string[] = [];
  let alreadyMade = 0;
  await conn.transaction(async (trx) => {
    // One "Make deliveries" at a time per release, so two clicks cannot both queue the same files.
    await trx("releases").where({ id: releaseId }).forUpdate().first("id");
    for (const p of plan) {
      const source = sources.get(p.trackId);
      if (!source) continue;
      const printDone = (await trx("renders").where({ id: source }).first<{ state: string }>("state"))?.state === "done";
      for (const f of formats) {
        const existing = await trx("deliveries")
          .where({ track_id: p.trackId, format_id: f.id, source_render_id: source })
          .whereIn("state", ["queued", "running", "done"])
          .first("id");
        if (existing) alreadyMade++;
        else {
          const id = await createDelivery({ trackId: p.trackId, formatId: f.id, sourceRenderId: source }, trx);
          (printDone ? deliveryIds : waitingOnPrint).push(id);
        }
      }
    }
  });
  return { deliveryIds, alreadyMade, leftOut: plan.filter((p) => !sources.has(p.trackId)), waitingOnPrint, printsQueued };
}

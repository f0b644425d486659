// Changes to a release's own delivery formats, and what happens to the files
// already made in them:
// - The first change copies the studio's defaults into the release, and the
//   release's files made in a default move to its copy (the same format), so
//   nothing drops out of the package.
// - Editing a format's sound (rate, depth, dither, ceiling, target) takes the
//   files made before out of it (format_id null): they stay stored and listed,
//   but leave the package and the loudness report. A new name keeps them.
// - Deleting a format does the same to its finished files (the foreign key
//   sets format_id null) and drops its queued deliveries (their jobs find no
//   row and end). The last format of a release cannot go: the release would
//   fall back to the studio's defaults unasked.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { checkDeliveryFormat } from "../../dsp/delivery/delivery-format.ts";
import type { NamedDeliveryFormat } from "../lib/delivery/default-formats.ts";
import { addFormat, releaseFormats, type StoredFormat } from "./delivery.server.ts";

/** The release's own formats, inside the transaction; returns the map from default id to copy id when the defaults were copied now. */
async function ownFormats(trx: Knex.Transaction, studioId: string, releaseId: string): Promise<Map<string, string>> {
  const ids = new Map<string, string>();
  const own = await trx("delivery_formats").where({ release_id: releaseId }).first("id");
  if (own) return ids;
  for (const d of await releaseFormats(releaseId, trx)) {
    const copy = (await addFormat(studioId, releaseId, d, trx)).id;
    ids.set(d.id, copy);
    await trx("deliveries").where({ release_id: releaseId, format_id: d.id }).update({ format_id: copy });
  }
  return ids;
}

/** Whether two formats make different files (the name aside). */
const printsDiffer = (a: StoredFormat, b: NamedDeliveryFormat) =>
  a.sampleRate !== b.sampleRate || String(a.bitDepth) !== String(b.bitDepth) || a.dither !== b.dither || a.ceilingDbtp !== b.ceilingDbtp || (a.targetLufs ?? null) !== (b.targetLufs ?? null);

/**
 * Adds a format to the release (editId null) or edits one of its formats.
 * Returns false when editId is not one of this release's formats. Throws a
 * RangeError for a format that cannot be printed, and the database's unique
 * violation for a name the release already has.
 */
export async function saveReleaseFormat(studioId: string, releaseId: string, format: NamedDeliveryFormat, editId: string | null): Promise<boolean> {
  return db.transaction(async (trx) => {
    const ids = await ownFormats(trx, studioId, releaseId);
    if (!editId) {
      await addFormat(studioId, releaseId, format, trx);
      return true;
    }
    checkDeliveryFormat(format);
    const id = ids.get(editId) ?? editId;
    const before = (await releaseFormats(releaseId, trx)).find((f) => f.id === id);
    if (!before) return false;
    if (printsDiffer(before, format)) await trx("deliveries").where({ format_id: id }).update({ format_id: null });
    const updated = await trx("delivery_formats")
      .where({ id, release_id: releaseId })
      .update({ name: format.name, sample_rate_hz: format.sampleRate, bit_depth: String(format.bitDepth), dither: format.dither, ceiling_dbtp: format.ceilingDbtp, target_lufs: format.targetLufs ?? null });
    return updated === 1;
  });
}

/** Deletes one of the release's formats (see the top of this file for its files). */
export async function deleteReleaseFormat(studioId: string, releaseId: string, formatId: string): Promise<"deleted" | "not-ours" | "last"> {
  return db.transaction(async (trx) => {
    const ids = await ownFormats(trx, studioId, releaseId);
    const id = ids.get(formatId) ?? formatId;
    const format = await trx("delivery_formats").where({ id, release_id: releaseId }).forUpdate().first("id");
    if (!format) return "not-ours";
    const count = await trx("delivery_formats").where({ release_id: releaseId }).count<{ count: string }[]>("id as count");
    if (Number(count[0]?.count) <= 1) return "last";
    await trx("deliveries").where({ format_id: id, state: "queued" }).delete();
    await trx("delivery_formats").where({ id }).delete();
    return "deleted";
  });
}

/** Whether the release has formats of its own (else it uses the studio's defaults). */
export async function hasOwnFormats(releaseId: string): Promise<boolean> {
  return (await db("delivery_formats").where({ release_id: releaseId }).first("id")) !== undefined;
}

/** How many finished files of the release were made in this format. */
export async function finishedFilesIn(releaseId: string, formatId: string): Promise<number> {
  const [row] = await db("deliveries").where({ format_id: formatId, release_id: releaseId, state: "done" }).count<{ count: string }[]>("id as count");
  return Number(row?.count ?? 0);
}

export type DeliveryListRow = { id: string; position: number; title: string; formatName: string; formatKept: boolean; state: string; warnings: string[] | null; error: string | null; createdAt: string; integratedLufs: number | null; truePeakDbtp: number | null };

/** The release's deliveries, newest first (at most 200), with the format's name as it was made and whether the file is still in it. */
export async function listReleaseDeliveries(releaseId: string): Promise<DeliveryListRow[]> {
  return db("deliveries as d")
    .join("tracks as t", "t.id", "d.track_id")
    .where("d.release_id", releaseId)
    .orderBy([{ column: "d.created_at", order: "desc" }, { column: "t.position" }])
    .limit(200)
    .select("d.id", "t.position", "t.title", db.raw(`d.format->>'name' AS "formatName"`), db.raw(`d.format_id IS NOT NULL AS "formatKept"`), "d.state", "d.warnings", "d.error", "d.created_at as createdAt", db.raw(`(d.analysis->>'integratedLufs')::float8 AS "integratedLufs"`), db.raw(`(d.analysis->>'truePeakDbtp')::float8 AS "truePeakDbtp"`));
}

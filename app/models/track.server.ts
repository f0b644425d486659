// Tracks of a release, in their order. Callers have already checked access to the release.
import { db } from "../lib/db.server.ts";
import { isUuid } from "../lib/ids.ts";
import type { TrackInput } from "../schemas/track.ts";

export type Track = { id: string; position: number; title: string; isrc: string | null };

export async function listTracks(releaseId: string): Promise<Track[]> {
  return db("tracks").select("id", "position", "title", "isrc").where({ release_id: releaseId }).orderBy("position");
}

export async function getTrack(releaseId: string, trackId: string): Promise<Track | undefined> {
  if (!isUuid(trackId)) return undefined;
  return db("tracks").first("id", "position", "title", "isrc").where({ id: trackId, release_id: releaseId });
}

export async function nextTrackPosition(releaseId: string): Promise<number> {
  const row = await db("tracks").where({ release_id: releaseId }).max<{ max: number | null }>("position as max").first();
  return (row?.max ?? 0) + 1;
}

/** The track already at this position, other than the one being edited. */
export async function trackAtPosition(releaseId: string, position: number, exceptTrackId?: string): Promise<Track | undefined> {
  const query = db("tracks").first("id", "position", "title", "isrc").where({ release_id: releaseId, position });
  if (exceptTrackId) query.whereNot("id", exceptTrackId);
  return query;
}

export async function createTrack(releaseId: string, input: TrackInput): Promise<string> {
  const [row] = await db("tracks")
    .insert({ release_id: releaseId, position: input.position, title: input.title, isrc: input.isrc })
    .returning<{ id: string }[]>("id");
  await touchRelease(releaseId);
  return row.id;
}

export async function updateTrack(releaseId: string, trackId: string, input: TrackInput): Promise<void> {
  await db("tracks")
    .where({ id: trackId, release_id: releaseId })
    .update({ position: input.position, title: input.title, isrc: input.isrc, updated_at: db.fn.now() });
  await touchRelease(releaseId);
}

/**
 * Swaps a track with its neighbour above or below, in one transaction (the
 * unique position constraint is deferrable for exactly this). False when the
 * track is already first or last, or not on this release.
 */
export async function moveTrack(releaseId: string, trackId: string, direction: "up" | "down"): Promise<boolean> {
  return db.transaction(async (trx) => {
    // Row locks on the release's tracks: two reorders at once run one after the other.
    const tracks = await trx("tracks").select("id", "position").where({ release_id: releaseId }).orderBy("position").forUpdate();
    const index = tracks.findIndex((t: { id: string }) => t.id === trackId);
    const neighbour = index < 0 ? undefined : tracks[direction === "up" ? index - 1 : index + 1];
    if (!neighbour) return false;
    await trx.raw("SET CONSTRAINTS tracks_release_position_unique DEFERRED");
    await trx("tracks").where({ id: trackId }).update({ position: neighbour.position, updated_at: trx.fn.now() });
    await trx("tracks").where({ id: neighbour.id }).update({ position: tracks[index].position, updated_at: trx.fn.now() });
    await trx("releases").where({ id: releaseId }).update({ updated_at: trx.fn.now() });
    return true;
  });
}

async function touchRelease(releaseId: string): Promise<void> {
  await db("releases").where({ id: releaseId }).update({ updated_at: db.fn.now() });
}

/** PostgreSQL's unique_violation; two people adding a track at the same position at once. */
export function isUniqueViolation(error: unknown): boolean {
  return typeof error === "object" && error !== null && (error as { code?: string }).code === "23505";
}

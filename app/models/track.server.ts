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

async function touchRelease(releaseId: string): Promise<void> {
  await db("releases").where({ id: releaseId }).update({ updated_at: db.fn.now() });
}

/** PostgreSQL's unique_violation; two people adding a track at the same position at once. */
export function isUniqueViolation(error: unknown): boolean {
  return typeof error === "object" && error !== null && (error as { code?: string }).code === "23505";
}

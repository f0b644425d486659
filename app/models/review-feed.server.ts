// What a release's client has been sent to review, newest first, with each
// track's review state: the release page and the dashboard show both.
import { db } from "../lib/db.server.ts";
import type { ReviewStatus } from "../lib/review/state.ts";
import { getTrackReviews } from "./review.server.ts";

export type SentItem = {
  id: string;
  trackId: string;
  trackTitle: string;
  renderId: string;
  renderKind: "preview" | "print";
  message: string | null;
  senderName: string | null;
  sentAt: Date;
};

export async function listSentForRelease(releaseId: string): Promise<SentItem[]> {
  const rows = await db("review_requests as rq")
    .join("tracks as t", "t.id", "rq.track_id")
    .join("renders as rd", "rd.id", "rq.render_id")
    .leftJoin("users as u", "u.id", "rq.sent_by")
    .where("t.release_id", releaseId)
    .orderBy([{ column: "rq.created_at", order: "desc" }, { column: "rq.id" }])
    .select("rq.id", "t.id as track_id", "t.title as track_title", "rq.render_id", "rd.kind", "rq.message", "u.name as sender_name", "rq.created_at");
  return rows.map((r: Record<string, any>) => ({
    id: r.id,
    trackId: r.track_id,
    trackTitle: r.track_title,
    renderId: r.render_id,
    renderKind: r.kind,
    message: r.message,
    senderName: r.sender_name,
    sentAt: r.created_at,
  }));
}

/** Each track's review status (in progress, sent, changes asked, approved). */
export async function reviewStatuses(trackIds: string[]): Promise<Record<string, ReviewStatus>> {
  const states = await getTrackReviews(trackIds);
  return Object.fromEntries([...states].map(([id, s]) => [id, s.status]));
}

/** Tracks of these releases whose review is waiting on someone (sent or changes asked). */
export async function openReviews(releaseIds: string[]): Promise<{ releaseId: string; releaseTitle: string; trackId: string; trackTitle: string; status: ReviewStatus }[]> {
  if (releaseIds.length === 0) return [];
  const tracks = await db("tracks as t")
    .join("releases as r", "r.id", "t.release_id")
    .whereIn("t.release_id", releaseIds)
    .whereExists(db("review_requests as rq").whereRaw("rq.track_id = t.id"))
    .orderBy([{ column: "r.title" }, { column: "t.position" }])
    .select<{ release_id: string; release_title: string; id: string; title: string }[]>("t.release_id", "r.title as release_title", "t.id", "t.title");
  const statuses = await reviewStatuses(tracks.map((t) => t.id));
  return tracks.map((t) => ({ releaseId: t.release_id, releaseTitle: t.release_title, trackId: t.id, trackTitle: t.title, status: statuses[t.id]! }));
}

// The review room of a release: what its client hears and says, one page for
// the whole release. Every track with something sent for review, in running
// order, with its version under review and its state; for the chosen track
// its sent versions under plain names, the engineer's message, the comments
// and whether a verdict is asked for now.
//
// This is the client's view, and staff see exactly the same (to know what the
// client sees): the data holds no mix file names, chain names or revisions,
// loudness targets or gain-reduction traces — tests/server/review-room.test.ts
// asserts that on this data. The renders come through the one visibility rule
// (listReviewableRenders → whereRenderVisible): only renders sent for review.
import { db } from "../lib/db.server.ts";
import type { CurrentUser } from "./user.server.ts";
import { renderRecipe, REVIEW_STATUS_LABEL, reviewStatusText, type ReviewState, type ReviewStatus } from "../lib/review/state.ts";
import { listComments } from "./comment.server.ts";
import { getTrackReview, listReviewableRenders, type ReviewableRender } from "./review.server.ts";
import { listTracks } from "./track.server.ts";

/** Stored waveform peaks, placed on the song's time axis. */
export type RoomPeaks = { startS: number; endS: number; min: number[]; max: number[] };

export type RoomVersion = {
  renderId: string;
  version: number;
  kind: "preview" | "print";
  /** "Preview of Slow Ferry, version 2" / "Full master of Slow Ferry, version 2". */
  name: string;
  /** Where it starts and ends in the song (a preview's stretch; a full master from 0). */
  startS: number;
  endS: number | null;
  sentAt: string;
  /** The engineer's message sent with it. */
  message: string | null;
  sentBy: string | null;
  /** Used only to match loudness between versions in the player; never shown. */
  matchLufs: number | null;
  peaks: RoomPeaks | null;
};

export type RoomTrack = {
  id: string;
  position: number;
  title: string;
  status: ReviewStatus;
  statusText: string;
  /** The version under review now (what the client hears first). */
  currentRenderId: string;
  version: number | null;
  approvedVersion: number | null;
};

export type RoomReview = { status: ReviewStatus; statusLabel: string; statusText: string; version: number | null; approvedVersion: number | null; changesNote: string | null };

export type RoomSelection = {
  track: { id: string; title: string };
  review: RoomReview;
  /** Every sent render of the track, newest first. */
  versions: RoomVersion[];
  current: RoomVersion;
  /** The latest sent render of the version before the current one, for "this version / the previous version". */
  previous: RoomVersion | null;
  /** Whether the two overlap in the song, so they can be switched at the same moment. */
  sideBySide: boolean;
  comments: Awaited<ReturnType<typeof listComments>>;
  /** The current render is the one a verdict is asked for now. */
  verdictOpen: boolean;
};

export type ReviewRoom = {
  release: { id: string; title: string };
  staff: boolean;
  tracks: RoomTrack[];
  selected: RoomSelection | null;
};

type Sent = { render_id: string; message: string | null; created_at: Date; sender: string | null };

const versionName = (kind: "preview" | "print", title: string, version: number) => `${kind === "print" ? "Full master" : "Preview"} of ${title}, version ${version}`;

function versionNumber(state: ReviewState, r: ReviewableRender): number {
  const recipe = renderRecipe({ mixId: r.mixId, chainRevisionId: r.chainRevisionId, targetLufs: r.targetLufs });
  const i = state.recipes.indexOf(recipe);
  return i >= 0 ? i + 1 : state.recipes.length + 1;
}

async function extents(renderIds: string[]): Promise<Map<string, { peaks: unknown; durationS: number | null }>> {
  if (renderIds.length === 0) return new Map();
  const rows = await db("renders as rd")
    .join("mixes as m", "m.id", "rd.mix_id")
    .whereIn("rd.id", renderIds)
    .select<{ id: string; peaks: { frames: number; sampleRate: number; min: number[]; max: number[] } | null; kind: string; frames: string; sample_rate_hz: number }[]>(
      "rd.id",
      "rd.peaks",
      "rd.kind",
      "m.frames",
      "m.sample_rate_hz",
    );
  return new Map(rows.map((r) => [r.id, { peaks: r.peaks, durationS: r.peaks ? r.peaks.frames / r.peaks.sampleRate : r.kind === "print" ? Number(r.frames) / r.sample_rate_hz : null }]));
}

/** The room of a release for this viewer; `wantTrack`/`wantRender` choose what is open (else the first track's version under review). */
export async function getReviewRoom(user: CurrentUser, release: { id: string; title: string }, want: { trackId?: string | null; renderId?: string | null } = {}): Promise<ReviewRoom> {
  const staff = user.role === "owner" || user.role === "engineer";
  const tracks: RoomTrack[] = [];
  const perTrack = new Map<string, { state: ReviewState; sent: ReviewableRender[] }>();
  for (const t of await listTracks(release.id)) {
    // What the client may hear is what was sent; staff see the same.
    const sent = (await listReviewableRenders(user, t.id)).filter((r) => r.sentForReview);
    if (sent.length === 0) continue;
    const { state } = await getTrackReview(t.id);
    perTrack.set(t.id, { state, sent });
    const current = sent.find((r) => r.id === state.underReviewRenderId) ?? sent[0];
    tracks.push({
      id: t.id,
      position: t.position,
      title: t.title,
      status: state.status,
      statusText: reviewStatusText(state),
      currentRenderId: current.id,
      version: state.version,
      approvedVersion: state.approvedVersion,
    });
  }
  const chosen = tracks.find((t) => t.id === want.trackId) ?? tracks.find((t) => perTrack.get(t.id)!.sent.some((r) => r.id === want.renderId)) ?? tracks[0];
  if (!chosen) return { release: { id: release.id, title: release.title }, staff, tracks, selected: null };

  const { state, sent } = perTrack.get(chosen.id)!;
  const requests = await db("review_requests as rq")
    .leftJoin("users as u", "u.id", "rq.sent_by")
    .where("rq.track_id", chosen.id)
    .orderBy("rq.created_at", "desc")
    .select<Sent[]>("rq.render_id", "rq.message", "rq.created_at", "u.name as sender");
  const ext = await extents(sent.map((r) => r.id));
  const versions: RoomVersion[] = sent.map((r) => {
    const request = requests.find((q) => q.render_id === r.id);
    const e = ext.get(r.id);
    const startS = r.region?.startS ?? 0;
    const endS = r.region?.endS ?? (e?.durationS != null ? startS + e.durationS : null);
    const peaks = e?.peaks as { min: number[]; max: number[] } | null | undefined;
    const version = versionNumber(state, r);
    return {
      renderId: r.id,
      version,
      kind: r.kind,
      name: versionName(r.kind, chosen.title, version),
      startS,
      endS,
      sentAt: (request?.created_at ?? r.finishedAt).toISOString(),
      message: request?.message ?? null,
      sentBy: request?.sender ?? null,
      matchLufs: r.integratedLufs,
      peaks: peaks && endS !== null ? { startS, endS, min: peaks.min, max: peaks.max } : null,
    };
  });
  const current = versions.find((v) => v.renderId === want.renderId) ?? versions.find((v) => v.renderId === chosen.currentRenderId) ?? versions[0];
  // The version before: the newest sent render of a lower version number, else of any other version.
  const others = versions.filter((v) => v.version !== current.version);
  const previous = others.find((v) => v.version < current.version) ?? others[0] ?? null;
  const overlapS = previous && current.endS !== null && previous.endS !== null ? Math.min(current.endS, previous.endS) - Math.max(current.startS, previous.startS) : 0;
  return {
    release: { id: release.id, title: release.title },
    staff,
    tracks,
    selected: {
      track: { id: chosen.id, title: chosen.title },
      review: {
        status: state.status,
        statusLabel: REVIEW_STATUS_LABEL[state.status],
        statusText: reviewStatusText(state),
        version: state.version,
        approvedVersion: state.approvedVersion,
        changesNote: state.status === "changes_asked" ? state.changesNote : null,
      },
      versions,
      current,
      previous,
      sideBySide: overlapS >= 1,
      comments: await listComments({ renderId: current.renderId }),
      verdictOpen: state.status === "sent" && versionNumber(state, sent.find((r) => r.id === current.renderId)!) === state.version,
    },
  };
}

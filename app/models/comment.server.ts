// Comments pinned to a moment of a render or a mix, with one level of
// replies, resolved when dealt with. Times are seconds on the mix's time axis
// (a preview's own 0 s is its region's start), so a comment made on a preview
// lands at the same place on the print. A new comment e-mails the other side:
// the client's people when the studio writes, the engineer who sent the
// render (else the owners) when the client writes, and the thread's starter
// when someone else replies. A mix is the studio's own material (clients
// hear renders only): its comments are the staff's notes, written and read
// by staff alone, and e-mail no one but a thread's starter.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { queueEmail } from "../lib/mail/mailer.server.ts";
import { commentEmail } from "../lib/mail/templates.server.ts";
import { clientPeople, partOf, ReviewActionError, ReviewForbiddenError, staffToNotify, trackContext, type Person } from "./review.server.ts";

export type CommentTarget = { renderId: string; mixId?: undefined } | { mixId: string; renderId?: undefined };

export type Comment = {
  id: string;
  trackId: string;
  renderId: string | null;
  mixId: string | null;
  /** Seconds on the mix's time axis; a reply has its thread's. */
  timeS: number;
  body: string;
  authorId: string | null;
  authorName: string | null;
  parentId: string | null;
  resolvedAt: Date | null;
  createdAt: Date;
};

export type CommentThread = Comment & { replies: Comment[] };

type CommentRow = {
  id: string;
  track_id: string;
  render_id: string | null;
  mix_id: string | null;
  time_s: number | null;
  body: string;
  author_id: string | null;
  author_name?: string | null;
  parent_id: string | null;
  resolved_at: Date | null;
  created_at: Date;
};

export const MAX_COMMENT_LENGTH = 4000;

const fromRow = (row: CommentRow, threadTimeS?: number): Comment => ({
  id: row.id,
  trackId: row.track_id,
  renderId: row.render_id,
  mixId: row.mix_id,
  timeS: row.time_s ?? threadTimeS ?? 0,
  body: row.body,
  authorId: row.author_id,
  authorName: row.author_name ?? null,
  parentId: row.parent_id,
  resolvedAt: row.resolved_at,
  createdAt: row.created_at,
});

async function targetTrack(t: Knex | Knex.Transaction, target: CommentTarget): Promise<{ trackId: string; durationS: number } | undefined> {
  if (target.renderId) {
    const row = await t("renders as rd")
      .join("mixes as m", "m.id", "rd.mix_id")
      .where("rd.id", target.renderId)
      .first<{ track_id: string; frames: string; sample_rate_hz: number } | undefined>("m.track_id", "m.frames", "m.sample_rate_hz");
    return row && { trackId: row.track_id, durationS: Number(row.frames) / row.sample_rate_hz };
  }
  const row = await t("mixes").where({ id: target.mixId }).first<{ track_id: string; frames: string; sample_rate_hz: number } | undefined>("track_id", "frames", "sample_rate_hz");
  return row && { trackId: row.track_id, durationS: Number(row.frames) / row.sample_rate_hz };
}

export type NewComment = CommentTarget & {
  authorId: string;
  body: string;
  /** Required for a new thread; a reply takes its thread's time. */
  timeS?: number | null;
  parentId?: string | null;
  /** The link in the e-mail (to the comment in the player). */
  link: string;
};

export async function addComment(input: NewComment): Promise<{ comment: Comment; emailIds: string[] }> {
  const body = input.body.trim();
  if (!body) throw new ReviewActionError("Write something first.");
  if (body.length > MAX_COMMENT_LENGTH) throw new ReviewActionError(`A comment holds at most ${MAX_COMMENT_LENGTH} characters.`);
  return db.transaction(async (t) => {
    const target = await targetTrack(t, input);
    if (!target) throw new ReviewForbiddenError("nothing to comment on");
    const ctx = (await trackContext(t, target.trackId))!;
    const author = await partOf(t, ctx, input.authorId);
    if (!author.part) throw new ReviewForbiddenError("not one of this release's people");
    if (input.mixId && author.part !== "staff") throw new ReviewForbiddenError("a mix's comments are the studio's");

    let parent: CommentRow | undefined;
    let timeS: number | null = null;
    if (input.parentId) {
      parent = await t("comments").where({ id: input.parentId }).first<CommentRow | undefined>("*");
      const sameTarget = parent && parent.render_id === (input.renderId ?? null) && parent.mix_id === (input.mixId ?? null);
      if (!parent || !sameTarget) throw new ReviewForbiddenError("no such thread here");
      if (parent.parent_id) throw new ReviewActionError("Reply to the thread, not to a reply.");
    } else {
      timeS = input.timeS ?? null;
      if (timeS === null || !Number.isFinite(timeS) || timeS < 0) throw new ReviewActionError("A comment needs a time in the track.");
      // A little past the end is a click at the very end of the bar.
      if (timeS > target.durationS + 1) throw new ReviewActionError("That time is after the end of the track.");
      timeS = Math.min(timeS, target.durationS);
    }

    const [row] = await t("comments")
      .insert({
        track_id: target.trackId,
        render_id: input.renderId ?? null,
        mix_id: input.mixId ?? null,
        time_s: timeS,
        body,
        author_id: input.authorId,
        parent_id: parent?.id ?? null,
      })
      .returning<CommentRow[]>("*");
    const comment = fromRow({ ...row, author_name: author.name }, parent?.time_s ?? undefined);

    const recipients = new Map<string, Person>();
    const others = input.mixId ? [] : author.part === "staff" ? await clientPeople(t, ctx) : await staffToNotify(t, ctx, input.renderId ?? null);
    for (const p of others) recipients.set(p.id, p);
    if (parent?.author_id) {
      const starter = await t("users").where({ id: parent.author_id }).first<Person | undefined>("id", "email", "name");
      if (starter) recipients.set(starter.id, starter);
    }
    recipients.delete(input.authorId);
    const emailIds: string[] = [];
    for (const person of recipients.values()) {
      const parts = commentEmail({ studioName: ctx.studioName, authorName: author.name, releaseTitle: ctx.releaseTitle, trackTitle: ctx.trackTitle, atSeconds: comment.timeS, body, link: input.link });
      emailIds.push(await queueEmail(t, { to: person.email, ...parts, kind: "comment", studioId: ctx.studioId, userId: person.id, releaseId: ctx.releaseId }));
    }
    return { comment, emailIds };
  });
}

/** Threads of a render or a mix in time order, replies oldest first. */
export async function listComments(target: CommentTarget): Promise<CommentThread[]> {
  const rows = await db("comments as c")
    .leftJoin("users as u", "u.id", "c.author_id")
    .where(target.renderId ? { "c.render_id": target.renderId } : { "c.mix_id": target.mixId })
    .orderBy([{ column: "c.created_at" }, { column: "c.id" }])
    .select<CommentRow[]>("c.*", "u.name as author_name");
  const threads = new Map<string, CommentThread>();
  for (const row of rows) if (!row.parent_id) threads.set(row.id, { ...fromRow(row), replies: [] });
  for (const row of rows) {
    const thread = row.parent_id ? threads.get(row.parent_id) : undefined;
    if (thread) thread.replies.push(fromRow(row, thread.timeS));
  }
  return [...threads.values()].sort((a, b) => a.timeS - b.timeS || a.createdAt.getTime() - b.createdAt.getTime());
}

/** What a comment is pinned to (a render or a mix of a track); undefined for an unknown id. */
export async function getCommentTarget(commentId: string): Promise<{ id: string; trackId: string; renderId: string | null; mixId: string | null } | undefined> {
  const row = await db("comments").where({ id: commentId }).first<{ id: string; track_id: string; render_id: string | null; mix_id: string | null } | undefined>("id", "track_id", "render_id", "mix_id");
  return row && { id: row.id, trackId: row.track_id, renderId: row.render_id, mixId: row.mix_id };
}

/** Marks a thread resolved (or open again); anyone of the release's people may. */
export async function setCommentResolved(commentId: string, userId: string, resolved: boolean): Promise<Comment> {
  return db.transaction(async (t) => {
    const row = await t("comments").where({ id: commentId }).first<CommentRow | undefined>("*");
    if (!row) throw new ReviewForbiddenError("no such comment");
    const ctx = (await trackContext(t, row.track_id))!;
    const { part } = await partOf(t, ctx, userId);
    if (!part) throw new ReviewForbiddenError("not one of this release's people");
    if (row.mix_id && part !== "staff") throw new ReviewForbiddenError("a mix's comments are the studio's");
    if (row.parent_id) throw new ReviewActionError("Resolve the thread, not a reply.");
    const [updated] = await t("comments")
      .where({ id: commentId })
      .update(resolved ? { resolved_at: t.fn.now(), resolved_by: userId } : { resolved_at: null, resolved_by: null })
      .returning<CommentRow[]>("*");
    return fromRow(updated);
  });
}

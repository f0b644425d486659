// Review of a track: a render sent to the client, and the client's verdict
// on it (approve, or ask for changes with a note). The state is derived from
// the stored rows with the track's mixes and finished renders
// (app/lib/review/state.ts); each action is checked against that state under
// a lock on the track, so two verdicts at once cannot both land, and queues
// its e-mail in the same transaction (a message exists exactly when the step
// it announces was committed). Links in the messages are the caller's.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { queueEmail } from "../lib/mail/mailer.server.ts";
import { approvedEmail, changesRequestedEmail, renderForReviewEmail } from "../lib/mail/templates.server.ts";
import { whereRenderVisible } from "../lib/render-visibility.server.ts";
import { applyReviewEvent, deriveReviewState, renderRecipe, sendReopensApproval, versionOf, type ReviewEvent, type ReviewState } from "../lib/review/state.ts";

type Db = Knex | Knex.Transaction;

/** A step that the review's state does not allow now (answer 409 with the message). */
export class ReviewActionError extends Error {
  constructor(message: string) {
    super(message);
    this.name = "ReviewActionError";
  }
}

/** The user may not take this step on this track (answer 404, like a missing record). */
export class ReviewForbiddenError extends Error {
  constructor(message = "not allowed") {
    super(message);
    this.name = "ReviewForbiddenError";
  }
}

export type TrackContext = {
  trackId: string;
  trackTitle: string;
  releaseId: string;
  releaseTitle: string;
  studioId: string;
  studioName: string;
  clientId: string;
};

export type Person = { id: string; email: string; name: string };

export async function trackContext(t: Db, trackId: string): Promise<TrackContext | undefined> {
  return t("tracks as t")
    .join("releases as r", "r.id", "t.release_id")
    .join("studios as s", "s.id", "r.studio_id")
    .where("t.id", trackId)
    .first<TrackContext | undefined>(
      "t.id as trackId",
      "t.title as trackTitle",
      "r.id as releaseId",
      "r.title as releaseTitle",
      "s.id as studioId",
      "s.name as studioName",
      "r.client_id as clientId",
    );
}

/** The track a render belongs to (through its mix). */
export async function trackOfRender(t: Db, renderId: string): Promise<{ trackId: string; state: string; regionStartS: number | null; recipe: string } | undefined> {
  const row = await t("renders as rd")
    .join("mixes as m", "m.id", "rd.mix_id")
    .where("rd.id", renderId)
    .first<{ trackId: string; state: string; regionStartS: number | null; mixId: string; chainRevisionId: string; targetLufs: number | null } | undefined>(
      "m.track_id as trackId",
      "rd.state as state",
      "rd.region_start_s as regionStartS",
      "rd.mix_id as mixId",
      "rd.chain_revision_id as chainRevisionId",
      "rd.target_lufs as targetLufs",
    );
  return row && { trackId: row.trackId, state: row.state, regionStartS: row.regionStartS, recipe: renderRecipe(row) };
}

/** The client's people who follow this release. */
export async function clientPeople(t: Db, ctx: TrackContext): Promise<Person[]> {
  return t("memberships as ms")
    .join("users as u", "u.id", "ms.user_id")
    .where({ "ms.studio_id": ctx.studioId, "ms.role": "client", "ms.client_id": ctx.clientId })
    .orderBy("u.email")
    .select<Person[]>("u.id", "u.email", "u.name");
}

/** Who hears back from the client about a render: whoever sent it, else the studio's owners. */
export async function staffToNotify(t: Db, ctx: TrackContext, renderId: string | null): Promise<Person[]> {
  if (renderId) {
    const sender = await t("review_requests as rq")
      .join("users as u", "u.id", "rq.sent_by")
      .join("memberships as ms", function () {
        this.on("ms.user_id", "u.id").andOnVal("ms.studio_id", ctx.studioId);
      })
      .whereIn("ms.role", ["owner", "engineer"])
      .where("rq.render_id", renderId)
      .orderBy("rq.created_at", "desc")
      .first<Person | undefined>("u.id", "u.email", "u.name");
    if (sender) return [sender];
  }
  return t("memberships as ms")
    .join("users as u", "u.id", "ms.user_id")
    .where({ "ms.studio_id": ctx.studioId, "ms.role": "owner" })
    .orderBy("u.email")
    .select<Person[]>("u.id", "u.email", "u.name");
}

/** The user's part in this track's release: staff of its studio, its client, or none. */
export async function partOf(t: Db, ctx: TrackContext, userId: string): Promise<{ part: "staff" | "client" | null; name: string }> {
  const row = await t("memberships as ms")
    .join("users as u", "u.id", "ms.user_id")
    .where({ "ms.user_id": userId, "ms.studio_id": ctx.studioId })
    .first<{ role: string; client_id: string | null; name: string } | undefined>("ms.role", "ms.client_id", "u.name");
  if (!row) return { part: null, name: "" };
  if (row.role === "owner" || row.role === "engineer") return { part: "staff", name: row.name };
  return { part: row.client_id === ctx.clientId ? "client" : null, name: row.name };
}

/** Everything that moves a track's review, from the four tables it lives in. */
export async function reviewEvents(t: Db, trackId: string): Promise<ReviewEvent[]> {
  // One after another: `t` may be a transaction, which runs on one connection.
  const mixes = await t("mixes").where({ track_id: trackId }).select<{ id: string; created_at: Date }[]>("id", "created_at");
  const renders = await t("renders as rd")
      .join("mixes as m", "m.id", "rd.mix_id")
      .where({ "m.track_id": trackId, "rd.state": "done" })
      .whereNotNull("rd.finished_at")
      .select<{ id: string; mix_id: string; chain_revision_id: string; target_lufs: number | null; finished_at: Date }[]>("rd.id", "rd.mix_id", "rd.chain_revision_id", "rd.target_lufs", "rd.finished_at");
  const requests = await t("review_requests").where({ track_id: trackId }).select<{ render_id: string; sent_by: string | null; message: string | null; created_at: Date }[]>("*");
  const verdicts = await t("review_events").where({ track_id: trackId }).select<{ render_id: string; kind: "approve" | "changes"; note: string | null; user_id: string | null; created_at: Date }[]>("*");
  // A verdict is on a finished render of this track, so its recipe is among these.
  const recipes = new Map(renders.map((r) => [r.id, renderRecipe({ mixId: r.mix_id, chainRevisionId: r.chain_revision_id, targetLufs: r.target_lufs })]));
  return [
    ...mixes.map((m): ReviewEvent => ({ kind: "mix_added", at: m.created_at, mixId: m.id })),
    ...renders.map((r): ReviewEvent => ({ kind: "render_done", at: r.finished_at, renderId: r.id, mixId: r.mix_id, recipe: recipes.get(r.id) })),
    ...requests.map((q): ReviewEvent => ({ kind: "sent", at: q.created_at, renderId: q.render_id, userId: q.sent_by, message: q.message, recipe: recipes.get(q.render_id) })),
    ...verdicts.map((v): ReviewEvent =>
      v.kind === "approve"
        ? { kind: "approved", at: v.created_at, renderId: v.render_id, userId: v.user_id, recipe: recipes.get(v.render_id) }
        : { kind: "changes_asked", at: v.created_at, renderId: v.render_id, userId: v.user_id, note: v.note ?? "", recipe: recipes.get(v.render_id) },
    ),
  ];
}

export type TrackReview = { state: ReviewState; ignored: { event: ReviewEvent; reason: string }[] };

export async function getTrackReview(trackId: string, t: Db = db): Promise<TrackReview> {
  return deriveReviewState(await reviewEvents(t, trackId));
}

/** Review states of many tracks at once (a release page). */
export async function getTrackReviews(trackIds: string[]): Promise<Map<string, ReviewState>> {
  const entries = await Promise.all(trackIds.map(async (id) => [id, (await getTrackReview(id)).state] as const));
  return new Map(entries);
}

export type ReviewHistoryItem = ReviewEvent & { userName: string | null };

/** The review's steps, oldest first, with who took them (mixes and renders left out). */
export async function listReviewHistory(trackId: string): Promise<ReviewHistoryItem[]> {
  const requests = await db("review_requests as rq")
    .leftJoin("users as u", "u.id", "rq.sent_by")
    .where("rq.track_id", trackId)
    .select<{ render_id: string; sent_by: string | null; message: string | null; created_at: Date; user_name: string | null }[]>("rq.*", "u.name as user_name");
  const verdicts = await db("review_events as re")
    .leftJoin("users as u", "u.id", "re.user_id")
    .where("re.track_id", trackId)
    .select<{ render_id: string; kind: string; note: string | null; user_id: string | null; created_at: Date; user_name: string | null }[]>("re.*", "u.name as user_name");
  const items: ReviewHistoryItem[] = [
    ...requests.map((q): ReviewHistoryItem => ({ kind: "sent", at: q.created_at, renderId: q.render_id, userId: q.sent_by, message: q.message, userName: q.user_name })),
    ...verdicts.map((v): ReviewHistoryItem =>
      v.kind === "approve"
        ? { kind: "approved", at: v.created_at, renderId: v.render_id, userId: v.user_id, userName: v.user_name }
        : { kind: "changes_asked", at: v.created_at, renderId: v.render_id, userId: v.user_id, note: v.note ?? "", userName: v.user_name },
    ),
  ];
  return items.sort((a, b) => a.at.getTime() - b.at.getTime());
}

type Locked = { ctx: TrackContext; state: ReviewState; recipe: string };

/** Opens the transaction, locks the render's track, and derives its state under the lock. */
async function withTrackLocked<T>(renderId: string, run: (t: Knex.Transaction, locked: Locked) => Promise<T>): Promise<T> {
  return db.transaction(async (t) => {
    const render = await trackOfRender(t, renderId);
    if (!render) throw new ReviewForbiddenError("render not found");
    await t("tracks").where({ id: render.trackId }).forUpdate().first("id");
    const ctx = (await trackContext(t, render.trackId))!;
    if (render.state !== "done") throw new ReviewActionError("Only a finished render can be reviewed.");
    const { state } = deriveReviewState(await reviewEvents(t, render.trackId));
    return run(t, { ctx, state, recipe: render.recipe });
  });
}

function check(state: ReviewState, event: ReviewEvent): void {
  const result = applyReviewEvent(state, event);
  if (!result.ok) throw new ReviewActionError(result.reason);
}

/**
 * What sending this render would do to a client who has approved: null when
 * nothing (not approved, or the approved master again), else the approved
 * version and the version this one would be. Shown to the engineer before sending.
 */
export async function sendWarning(renderId: string): Promise<{ approvedVersion: number; version: number } | null> {
  const render = await trackOfRender(db, renderId);
  if (!render) return null;
  const { state } = deriveReviewState(await reviewEvents(db, render.trackId));
  if (!sendReopensApproval(state, render.recipe) || state.approvedVersion === null) return null;
  return { approvedVersion: state.approvedVersion, version: versionOf(state, render.recipe) };
}

export type ReviewResult = { id: string; state: ReviewState; emailIds: string[] };

async function after(t: Knex.Transaction, trackId: string, id: string, emailIds: string[]): Promise<ReviewResult> {
  return { id, state: deriveReviewState(await reviewEvents(t, trackId)).state, emailIds };
}

/** An engineer (or owner) sends a finished render to the client; each of the client's people gets an e-mail. */
export async function sendForReview(input: { renderId: string; senderId: string; message?: string | null; link: string; confirmNewReview?: boolean }): Promise<ReviewResult> {
  const message = input.message?.trim() || null;
  return withTrackLocked(input.renderId, async (t, { ctx, state, recipe }) => {
    const sender = await partOf(t, ctx, input.senderId);
    if (sender.part !== "staff") throw new ReviewForbiddenError("only the studio sends renders for review");
    // A client who approved is asked to review again only when the engineer has seen that and confirmed it.
    if (sendReopensApproval(state, recipe) && !input.confirmNewReview) {
      throw new ReviewActionError(
        `The client approved version ${state.approvedVersion}. This is a different master (version ${versionOf(state, recipe)}): sending it asks them to review again. Tick the confirmation to send it.`,
      );
    }
    check(state, { kind: "sent", at: new Date(), renderId: input.renderId, userId: input.senderId, message, recipe });
    const [row] = await t("review_requests")
      .insert({ track_id: ctx.trackId, render_id: input.renderId, message, sent_by: input.senderId })
      .returning<{ id: string }[]>("id");
    const emailIds: string[] = [];
    for (const person of await clientPeople(t, ctx)) {
      const parts = renderForReviewEmail({ studioName: ctx.studioName, engineerName: sender.name, releaseTitle: ctx.releaseTitle, trackTitle: ctx.trackTitle, note: message, link: input.link });
      emailIds.push(await queueEmail(t, { to: person.email, ...parts, kind: "review_request", studioId: ctx.studioId, userId: person.id, releaseId: ctx.releaseId }));
    }
    return after(t, ctx.trackId, row.id, emailIds);
  });
}

async function verdict(input: { renderId: string; userId: string; note: string | null; link: string }, kind: "approve" | "changes"): Promise<ReviewResult> {
  return withTrackLocked(input.renderId, async (t, { ctx, state, recipe }) => {
    const who = await partOf(t, ctx, input.userId);
    if (who.part !== "client") throw new ReviewForbiddenError("only the release's client gives the verdict");
    const at = new Date();
    check(
      state,
      kind === "approve"
        ? { kind: "approved", at, renderId: input.renderId, userId: input.userId, recipe }
        : { kind: "changes_asked", at, renderId: input.renderId, userId: input.userId, note: input.note ?? "", recipe },
    );
    const [row] = await t("review_events")
      .insert({ track_id: ctx.trackId, render_id: input.renderId, kind, note: input.note, user_id: input.userId })
      .returning<{ id: string }[]>("id");
    const emailIds: string[] = [];
    for (const person of await staffToNotify(t, ctx, input.renderId)) {
      const common = { studioName: ctx.studioName, clientName: who.name, releaseTitle: ctx.releaseTitle, trackTitle: ctx.trackTitle, link: input.link };
      const parts = kind === "approve" ? approvedEmail(common) : changesRequestedEmail({ ...common, note: input.note });
      emailIds.push(await queueEmail(t, { to: person.email, ...parts, kind: kind === "approve" ? "review_approved" : "review_changes", studioId: ctx.studioId, userId: person.id, releaseId: ctx.releaseId }));
    }
    return after(t, ctx.trackId, row.id, emailIds);
  });
}

/** The client asks for changes to the render under review, saying which. */
export async function askForChanges(input: { renderId: string; userId: string; note: string; link: string }): Promise<ReviewResult> {
  const note = input.note.trim();
  if (!note) throw new ReviewActionError("Say what should change.");
  return verdict({ ...input, note }, "changes");
}

/** The client approves the render under review. */
export async function approveRender(input: { renderId: string; userId: string; link: string }): Promise<ReviewResult> {
  return verdict({ ...input, note: null }, "approve");
}

/** Who is looking: the signed-in member's studio, role and client. */
export type Viewer = { id: string; studioId: string; role: "owner" | "engineer" | "client"; clientId: string | null };

export type ReviewableRender = {
  id: string;
  kind: "preview" | "print";
  region: { startS: number; endS: number } | null;
  mixId: string;
  mixVersion: number;
  chainName: string;
  chainRevisionId: string;
  revision: number;
  params: unknown;
  targetLufs: number | null;
  integratedLufs: number | null;
  finishedAt: Date;
  sentForReview: boolean;
  outputKey: string;
  outputSampleRateHz: number | null;
  tracesKey: string | null;
};

const finiteOrNull = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : null);

/**
 * A track's finished renders this viewer may hear, newest first: all of them
 * for the studio's staff, only those sent for review for the client (work in
 * progress stays in the studio).
 */
export async function listReviewableRenders(viewer: Viewer, trackId: string): Promise<ReviewableRender[]> {
  const query = db("renders as rd")
    .join("mixes as m", "m.id", "rd.mix_id")
    .join("tracks as t", "t.id", "m.track_id")
    .join("releases as r", "r.id", "t.release_id")
    .join("chain_revisions as cr", "cr.id", "rd.chain_revision_id")
    .join("chains as c", "c.id", "cr.chain_id")
    .where({ "t.id": trackId, "rd.state": "done" })
    .orderBy([{ column: "rd.finished_at", order: "desc" }, { column: "rd.id" }])
    .select(
      "rd.id",
      "rd.kind",
      "rd.region_start_s",
      "rd.region_end_s",
      "rd.mix_id",
      "m.version as mix_version",
      "c.name as chain_name",
      "cr.id as chain_revision_id",
      "cr.revision",
      "cr.params",
      "rd.target_lufs",
      "rd.output_analysis",
      "rd.finished_at",
      "rd.output_key",
      "rd.output_sample_rate_hz",
      "rd.traces_key",
      db.raw("EXISTS (SELECT 1 FROM review_requests rq WHERE rq.render_id = rd.id) AS sent_for_review"),
    );
  // The one visibility rule (a client: only what was sent to them for review).
  const rows = await whereRenderVisible(query, viewer);
  return rows.map((row: Record<string, any>) => ({
    id: row.id,
    kind: row.kind,
    region: row.region_start_s === null ? null : { startS: row.region_start_s, endS: row.region_end_s },
    mixId: row.mix_id,
    mixVersion: row.mix_version,
    chainName: row.chain_name,
    chainRevisionId: row.chain_revision_id,
    revision: row.revision,
    params: row.params,
    targetLufs: row.target_lufs,
    integratedLufs: finiteOrNull(row.output_analysis?.integratedLufs),
    finishedAt: row.finished_at,
    sentForReview: row.sent_for_review,
    outputKey: row.output_key,
    outputSampleRateHz: row.output_sample_rate_hz,
    tracesKey: row.traces_key,
  }));
}

/** One render this viewer may hear (see listReviewableRenders), with its track; else undefined. */
export async function getRenderForViewer(viewer: Viewer, renderId: string): Promise<(ReviewableRender & { trackId: string; releaseId: string }) | undefined> {
  if (!/^[0-9a-f-]{36}$/i.test(renderId)) return undefined;
  const row = await db("renders as rd")
    .join("mixes as m", "m.id", "rd.mix_id")
    .join("tracks as t", "t.id", "m.track_id")
    .where("rd.id", renderId)
    .first<{ track_id: string; release_id: string } | undefined>("m.track_id", "t.release_id");
  if (!row) return undefined;
  const render = (await listReviewableRenders(viewer, row.track_id)).find((r) => r.id === renderId);
  return render && { ...render, trackId: row.track_id, releaseId: row.release_id };
}

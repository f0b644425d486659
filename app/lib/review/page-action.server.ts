// The review steps the compare and review pages post: send a render for
// review (staff), approve it or ask for changes (the client), comment at a
// time or reply, and resolve or reopen a thread. One rule for all of them:
// the render, mix or comment acted on must be one of the sources this user
// may compare on this track (app/models/compare-source.server.ts) — for a
// client, a render sent to them; for staff, any finished render and the
// mixes. Anything else answers 404, like a record that does not exist; a
// form that does not parse answers 400 with field errors.
import { data, redirect } from "react-router";
import { z } from "zod";
import { requireReleaseAccess } from "../auth.server.ts";
import { notFound } from "../http.server.ts";
import { publicAppUrl } from "../billing/links.ts";
import { parseForm } from "../forms.ts";
import { formatSourceKey } from "../compare/sources.ts";
import { addComment, getCommentTarget, MAX_COMMENT_LENGTH, setCommentResolved } from "../../models/comment.server.ts";
import { listCompareSources } from "../../models/compare-source.server.ts";
import { approveRender, askForChanges, ReviewActionError, ReviewForbiddenError, sendForReview } from "../../models/review.server.ts";
import { getTrack } from "../../models/track.server.ts";

const id = z.guid("not a valid id");
const text = (max: number) => z.string().max(max, `at most ${max} characters`).default("");
const optionalId = z.union([id, z.literal("").transform(() => undefined)]).optional();

export const reviewActionSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("send"), renderId: id, message: text(4000), confirmNewReview: z.literal("yes").optional() }),
  z.object({ intent: z.literal("approve"), renderId: id }),
  z.object({ intent: z.literal("changes"), renderId: id, note: text(4000) }),
  z
    .object({ intent: z.literal("comment"), renderId: optionalId, mixId: optionalId, parentId: optionalId, time: z.string().default(""), body: text(MAX_COMMENT_LENGTH) })
    .refine((v) => Boolean(v.renderId) !== Boolean(v.mixId), { message: "name a render or a mix", path: ["renderId"] }),
  z.object({ intent: z.enum(["resolve", "reopen"]), commentId: id }),
]);

/** The review room's address for a track (and a render of it), as e-mails carry it. */
export function reviewRoomLink(releaseId: string, trackId: string, renderId?: string): string {
  return `${publicAppUrl()}/releases/${releaseId}/room?track=${trackId}${renderId ? `&render=${renderId}` : ""}`;
}

export type ReviewActionData = { error: string; intent: string; fieldErrors?: Partial<Record<string, string>> };

/** "1:05.5" or "65.5" → 65.5 seconds; null when neither. */
export function parseTime(text: string): number | null {
  const m = /^\s*(?:(\d+):)?(\d+(?:\.\d+)?)\s*$/.exec(text);
  if (!m) return null;
  const seconds = (m[1] ? Number(m[1]) * 60 : 0) + Number(m[2]);
  return Number.isFinite(seconds) ? seconds : null;
}

export async function reviewPageAction({ request, params }: { request: Request; params: { releaseId?: string; trackId?: string } }) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId ?? "");
  if (!track) throw notFound();
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const parsed = parseForm(reviewActionSchema, form);
  if (!parsed.ok) return data<ReviewActionData>({ error: "The form was not understood.", intent, fieldErrors: parsed.errors }, { status: 400 });
  const input = parsed.data;

  // What this user may act on here: the same list the page offers.
  const sources = await listCompareSources(user, { id: track.id, releaseId: release.id });
  const has = (type: "render" | "mix", sourceId: string | null | undefined) => Boolean(sourceId) && sources.some((s) => s.type === type && s.id === sourceId);
  // E-mailed links use the public address, not the one this request came in on (a proxy's); a render's lead to the review room, which plays.
  const linkTo = (renderId: string) => reviewRoomLink(release.id, track.id, renderId);

  try {
    switch (input.intent) {
      case "resolve":
      case "reopen": {
        const target = await getCommentTarget(input.commentId);
        if (!target || target.trackId !== track.id || !(has("render", target.renderId) || has("mix", target.mixId))) throw notFound();
        await setCommentResolved(target.id, user.id, input.intent === "resolve");
        break;
      }
      case "comment": {
        if (input.renderId ? !has("render", input.renderId) : !has("mix", input.mixId)) throw notFound();
        const timeS = input.parentId ? null : parseTime(input.time);
        if (!input.parentId && timeS === null) return data<ReviewActionData>({ error: "Give the time as m:ss or seconds, e.g. 1:05.5.", intent, fieldErrors: { time: "m:ss or seconds" } }, { status: 400 });
        const target = input.renderId ? { renderId: input.renderId } : { mixId: input.mixId! };
        const link = input.renderId ? linkTo(input.renderId) : `${publicAppUrl()}/releases/${release.id}/tracks/${track.id}/compare?a=${formatSourceKey({ type: "mix", id: input.mixId! })}`;
        await addComment({ ...target, authorId: user.id, body: input.body, timeS, parentId: input.parentId ?? null, link });
        break;
      }
      case "send":
        if (!has("render", input.renderId)) throw notFound();
        await sendForReview({ renderId: input.renderId, senderId: user.id, message: input.message, link: linkTo(input.renderId), confirmNewReview: input.confirmNewReview === "yes" });
        break;
      case "approve":
        if (!has("render", input.renderId)) throw notFound();
        await approveRender({ renderId: input.renderId, userId: user.id, link: linkTo(input.renderId) });
        break;
      case "changes":
        if (!has("render", input.renderId)) throw notFound();
        await askForChanges({ renderId: input.renderId, userId: user.id, note: input.note, link: linkTo(input.renderId) });
        break;
    }
  } catch (error) {
    if (error instanceof ReviewForbiddenError) throw notFound();
    if (error instanceof ReviewActionError) return data<ReviewActionData>({ error: error.message, intent }, { status: 409 });
    throw error;
  }
  const url = new URL(request.url);
  throw redirect(`${url.pathname}${url.search}`);
}

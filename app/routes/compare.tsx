// Compare and review a track's renders: the A/B player (level-matched, one
// clock), the gain-reduction traces of both on one time axis and the chain
// parameters that differ (staff), comments pinned to times, and the review
// step: send A for review (staff), approve it or ask for changes (client).
import { Readable } from "node:stream";
import { useState } from "react";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/compare";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { isStaff } from "../lib/roles.ts";
import { publicAppUrl } from "../lib/billing/links.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { alignTraces, type AlignedTraces, type RenderTraces } from "../lib/compare/traces.ts";
import { labelChanges, type LabelledChange } from "../lib/compare/chain-changes.ts";
import { REVIEW_STATUS_LABEL } from "../lib/review/state.ts";
import { diffParams } from "../models/chain.server.ts";
import { addComment, listComments, setCommentResolved } from "../models/comment.server.ts";
import {
  approveRender,
  askForChanges,
  getTrackReview,
  listReviewableRenders,
  ReviewActionError,
  ReviewForbiddenError,
  sendForReview,
  type ReviewableRender,
} from "../models/review.server.ts";
import { getTrack } from "../models/track.server.ts";
import { AbPlayer } from "../components/player/ab-player.tsx";
import { formatClock } from "../components/player/format.ts";
import { TraceCharts } from "../components/player/trace-charts.tsx";
import { PageHeader } from "../components/page-header.tsx";
import { CommentThreads } from "../components/review/comment-threads.tsx";
import { VerdictForms } from "../components/review/verdict-forms.tsx";

const MAX_TRACE_POINTS = 1500;

const renderLabel = (r: Pick<ReviewableRender, "kind" | "region" | "mixVersion" | "revision">) =>
  `${r.kind === "print" ? "Print" : `Preview ${formatClock(r.region?.startS ?? 0)}–${formatClock(r.region?.endS ?? 0)}`} · mix v${r.mixVersion} · chain r${r.revision}`;

async function readTraces(key: string | null): Promise<RenderTraces | null> {
  if (!key) return null;
  try {
    const stream = await storage().get(key);
    const text = await new Response(Readable.toWeb(stream) as ReadableStream<Uint8Array>).text();
    const parsed = JSON.parse(text) as RenderTraces;
    return Array.isArray(parsed?.stages) && typeof parsed.gridMs === "number" ? parsed : null;
  } catch {
    return null; // Traces are a help, not a requirement: the player works without them.
  }
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const staff = isStaff(user.role);
  const renders = await listReviewableRenders(user, track.id);
  const url = new URL(request.url);
  const a = renders.find((r) => r.id === url.searchParams.get("a")) ?? renders[0] ?? null;
  const b = renders.find((r) => r.id === url.searchParams.get("b") && r.id !== a?.id) ?? renders.find((r) => r.id !== a?.id) ?? null;
  const review = await getTrackReview(track.id);

  let aligned: AlignedTraces | null = null;
  let changes: LabelledChange[] = [];
  if (staff && a && b) {
    const [ta, tb] = await Promise.all([readTraces(a.tracesKey), readTraces(b.tracesKey)]);
    if (ta && tb) aligned = alignTraces({ traces: ta, offsetS: a.region?.startS ?? 0 }, { traces: tb, offsetS: b.region?.startS ?? 0 }, { maxPoints: MAX_TRACE_POINTS });
    // What changed going from B's chain to A's.
    changes = labelChanges(diffParams(b.params, a.params), b.params, a.params);
  }
  const view = (r: ReviewableRender) => ({ id: r.id, label: renderLabel(r), offsetS: r.region?.startS ?? 0, integratedLufs: r.integratedLufs, sentForReview: r.sentForReview });
  return {
    release: { id: release.id, title: release.title, clientName: release.clientName },
    track: { id: track.id, title: track.title },
    staff,
    choices: renders.map(view),
    a: a && view(a),
    b: b && view(b),
    review: review.state,
    comments: a ? await listComments({ renderId: a.id }) : [],
    aligned,
    changes,
    sameChain: a && b ? a.chainRevisionId === b.chainRevisionId : false,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const form = await request.formData();
  const intent = String(form.get("intent") ?? "");
  const renderId = String(form.get("renderId") ?? "");
  const url = new URL(request.url);
  // A render of another track is treated as missing.
  const mine = (await listReviewableRenders(user, track.id)).some((r) => r.id === renderId);
  if (!mine && intent !== "resolve" && intent !== "reopen") throw notFound();
  // E-mailed links use the public address, not the one this request came in on (a proxy's).
  const link = `${publicAppUrl()}/releases/${release.id}/tracks/${track.id}/compare?a=${renderId}`;
  try {
    if (intent === "send") await sendForReview({ renderId, senderId: user.id, message: String(form.get("message") ?? ""), link });
    else if (intent === "approve") await approveRender({ renderId, userId: user.id, link });
    else if (intent === "changes") await askForChanges({ renderId, userId: user.id, note: String(form.get("note") ?? ""), link });
    else if (intent === "comment") {
      const parentId = String(form.get("parentId") ?? "") || null;
      const timeS = parentId ? null : parseTime(String(form.get("time") ?? ""));
      if (!parentId && timeS === null) return data({ error: "Give the time as m:ss or seconds, e.g. 1:05.5.", intent }, { status: 400 });
      await addComment({ renderId, authorId: user.id, body: String(form.get("body") ?? ""), timeS, parentId, link });
    } else if (intent === "resolve" || intent === "reopen") {
      await setCommentResolved(String(form.get("commentId") ?? ""), user.id, intent === "resolve");
    } else return data({ error: "Unknown action.", intent }, { status: 400 });
  } catch (error) {
    if (error instanceof ReviewForbiddenError) throw notFound();
    if (error instanceof ReviewActionError) return data({ error: error.message, intent }, { status: 409 });
    throw error;
  }
  throw redirect(`${url.pathname}${url.search}`);
}

/** "1:05.5" or "65.5" → 65.5 seconds; null when neither. */
function parseTime(text: string): number | null {
  const m = /^\s*(?:(\d+):)?(\d+(?:\.\d+)?)\s*$/.exec(text);
  if (!m) return null;
  const seconds = (m[1] ? Number(m[1]) * 60 : 0) + Number(m[2]);
  return Number.isFinite(seconds) ? seconds : null;
}

export default function Compare({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, staff, choices, a, b, review, comments, aligned, changes, sameChain } = loaderData;
  const [positionS, setPositionS] = useState<number | null>(null);
  const [commentTime, setCommentTime] = useState("");
  const busy = useNavigation().state !== "idle";
  const underReview = a && review.underReviewRenderId === a.id;

  return (
    <>
      <p className="mb-2 text-sm">
        <Link to={`/releases/${release.id}/tracks/${track.id}`} className="text-accent-deep underline-offset-4 hover:underline">
          ← {track.title}
        </Link>
      </p>
      <PageHeader
        eyebrow={
          <>
            {release.title} · review: <span data-testid="review-status">{REVIEW_STATUS_LABEL[review.status]}</span>
          </>
        }
        title={`Compare ${track.title}`}
      />
      {actionData?.error && (
        <p role="alert" className="mb-4 rounded-md bg-danger-wash px-3 py-2 text-sm text-danger">
          {actionData.error}
        </p>
      )}

      {choices.length > 0 && (
        <Form method="get" className="mb-4 flex flex-wrap items-end gap-3">
          {(["a", "b"] as const).map((slot) => (
            <label key={slot} className="text-sm">
              <span className="mb-1 block text-xs tracking-wide text-ink-soft uppercase">{slot}</span>
              <select name={slot} defaultValue={(slot === "a" ? a : b)?.id} className="field-input">
                {choices.map((c) => (
                  <option key={c.id} value={c.id}>
                    {c.label}
                    {c.sentForReview ? " · sent" : ""}
                  </option>
                ))}
              </select>
            </label>
          ))}
          <button type="submit" className="btn-quiet">
            Compare
          </button>
        </Form>
      )}

      {a && b ? (
        <AbPlayer
          key={`${a.id}:${b.id}`}
          a={{ url: `/renders/${a.id}/audio`, label: a.label, offsetS: a.offsetS, integratedLufs: a.integratedLufs }}
          b={{ url: `/renders/${b.id}/audio`, label: b.label, offsetS: b.offsetS, integratedLufs: b.integratedLufs }}
          comments={comments.map((c) => ({ id: c.id, timeS: c.timeS, body: c.body, resolved: c.resolvedAt !== null }))}
          onSeek={(t) => setCommentTime(formatClock(t))}
          onPositionChange={setPositionS}
        />
      ) : (
        <p className="card p-4 text-sm text-ink-soft">
          {choices.length === 0 ? "No finished render to listen to yet." : "A comparison needs two finished renders; one is ready so far."}
        </p>
      )}

      <div className="mt-6 grid gap-6 lg:grid-cols-[2fr_1fr]">
        <div className="space-y-6">
          {staff && aligned && a && b && (
            <section aria-labelledby="traces">
              <h2 id="traces" className="mb-2 text-lg font-semibold">
                Gain reduction
              </h2>
              <TraceCharts aligned={aligned} positionS={positionS} labels={{ a: a.label, b: b.label }} />
            </section>
          )}
          {staff && a && b && (
            <section aria-labelledby="changes">
              <h2 id="changes" className="mb-2 text-lg font-semibold">
                Chain changes from B to A
              </h2>
              {sameChain || changes.length === 0 ? (
                <p className="text-sm text-ink-soft">Both renders use the same parameters.</p>
              ) : (
                <table className="data-table" data-testid="chain-changes">
                  <thead>
                    <tr>
                      <th>Parameter</th>
                      <th>B</th>
                      <th>A</th>
                    </tr>
                  </thead>
                  <tbody>
                    {changes.map((c) => (
                      <tr key={c.path}>
                        <td>{c.label}</td>
                        <td className="num">{c.beforeText}</td>
                        <td className="num">{c.afterText}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              )}
            </section>
          )}
        </div>

        <aside className="space-y-6">
          {a && (
            <section aria-labelledby="review" className="card space-y-3 p-4">
              <h2 id="review" className="text-lg font-semibold">
                Review of A
              </h2>
              {review.status === "changes_asked" && review.changesNote && <blockquote className="border-l-2 border-accent pl-3 text-sm">{review.changesNote}</blockquote>}
              {staff ? (
                <Form method="post" className="space-y-2">
                  <input type="hidden" name="intent" value="send" />
                  <input type="hidden" name="renderId" value={a.id} />
                  <label className="block text-sm">
                    Message to the client (optional)
                    <textarea name="message" rows={3} maxLength={4000} className="field-input mt-1" />
                  </label>
                  <button type="submit" className="btn-primary" disabled={busy}>
                    {underReview ? "Send A again" : "Send A for review"}
                  </button>
                </Form>
              ) : underReview && review.status === "sent" ? (
                <VerdictForms renderId={a.id} busy={busy} />
              ) : (
                <p className="text-sm text-ink-soft">{review.status === "approved" ? "You approved this master." : "Nothing is waiting for your verdict."}</p>
              )}
            </section>
          )}

          {a && (
            <section aria-labelledby="comments" className="space-y-3">
              <h2 id="comments" className="text-lg font-semibold">
                Comments on A
              </h2>
              <Form method="post" className="card space-y-2 p-3">
                <input type="hidden" name="intent" value="comment" />
                <input type="hidden" name="renderId" value={a.id} />
                <label className="block text-sm">
                  At <span className="text-xs text-ink-soft">(click the waveform to pick the moment)</span>
                  <input name="time" required value={commentTime} onChange={(e) => setCommentTime(e.currentTarget.value)} placeholder="1:05.5" className="field-input num mt-1" />
                </label>
                <label className="block text-sm">
                  Comment
                  <textarea name="body" rows={2} required maxLength={4000} className="field-input mt-1" />
                </label>
                <button type="submit" className="btn-quiet" disabled={busy}>
                  Add comment
                </button>
              </Form>
              <CommentThreads comments={comments} renderId={a.id} busy={busy} />
            </section>
          )}
        </aside>
      </div>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Compare ${data?.track.title ?? "track"} · Tidemark` }];

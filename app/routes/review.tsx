// The client's review of one render sent to them: the render's player with a
// timeline of comment markers (a click on a marker plays from there; a click
// on the timeline picks the moment of a new comment), comments with replies
// and resolving, and the verdict: approve, or ask for changes with a note.
// The steps are the same action as the compare page's, so both pages agree.
import { useEffect, useRef, useState } from "react";
import { Form, Link, useNavigation } from "react-router";
import type { Route } from "./+types/review";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { isStaff } from "../lib/roles.ts";
import { listComments } from "../models/comment.server.ts";
import { shownReviewState } from "../lib/review/state.ts";
import { getTrackReview, listReviewableRenders } from "../models/review.server.ts";
import { getTrack } from "../models/track.server.ts";
import { reviewPageAction } from "../lib/review/page-action.server.ts";
import { formatClock } from "../lib/format.ts";
import { MonitoringReminder } from "../components/player/monitoring-notice.tsx";
import { BackLink } from "../components/page-header.tsx";
import { ReviewHeader } from "../components/review/review-header.tsx";
import { CommentThreads } from "../components/review/comment-threads.tsx";
import { VerdictForms } from "../components/review/verdict-forms.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const review = shownReviewState((await getTrackReview(track.id)).state);
  // What the client may hear is what was sent; staff see the same page for the sent renders.
  const sent = (await listReviewableRenders(user, track.id)).filter((r) => r.sentForReview);
  const wanted = new URL(request.url).searchParams.get("render");
  const render = sent.find((r) => r.id === wanted) ?? sent.find((r) => r.id === review.underReviewRenderId) ?? sent[0] ?? null;
  return {
    release: { id: release.id, title: release.title },
    track: { id: track.id, title: track.title },
    staff: isStaff(user.role),
    review,
    render: render && {
      id: render.id,
      kind: render.kind,
      offsetS: render.region?.startS ?? 0,
      endS: render.region?.endS ?? null,
      mixVersion: render.mixVersion,
      integratedLufs: render.integratedLufs,
    },
    sentCount: sent.length,
    // The version sent before this one (newest first), for the A/B link; else the newest other.
    earlierSentId: render ? (sent[sent.indexOf(render) + 1] ?? sent.find((r) => r.id !== render.id))?.id ?? null : null,
    comments: render ? await listComments({ renderId: render.id }) : [],
  };
}

export async function action(args: Route.ActionArgs) {
  return reviewPageAction(args);
}

export default function Review({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, staff, review, render, earlierSentId, comments } = loaderData;
  const audioRef = useRef<HTMLAudioElement>(null);
  const [durationS, setDurationS] = useState<number | null>(null);
  const [positionS, setPositionS] = useState(0);
  const [commentTime, setCommentTime] = useState("");
  const busy = useNavigation().state !== "idle";
  const offsetS = render?.offsetS ?? 0;
  const underReview = render !== null && review.underReviewRenderId === render.id;
  const error = actionData && typeof actionData === "object" && "error" in actionData ? String(actionData.error) : null;

  // Times are on the mix's axis; the audio element's 0 s is the render's own start.
  const seekTo = (mixTimeS: number) => {
    const audio = audioRef.current;
    if (!audio) return;
    audio.currentTime = Math.max(0, mixTimeS - offsetS);
    setPositionS(mixTimeS);
  };
  useEffect(() => {
    const audio = audioRef.current;
    if (audio && Number.isFinite(audio.duration)) setDurationS(audio.duration);
  }, []);
  const spanS = durationS ?? (render?.endS != null ? render.endS - offsetS : null);
  const fraction = (mixTimeS: number) => (spanS ? Math.min(1, Math.max(0, (mixTimeS - offsetS) / spanS)) : 0);

  return (
    <>
      <BackLink to={`/releases/${release.id}`}>{release.title}</BackLink>
      <ReviewHeader releaseTitle={release.title} status={review.status} title={`Review ${track.title}`} error={error} />
      {!render ? (
        <p className="card p-4 text-sm text-ink-soft">Nothing has been sent for review on this track yet.</p>
      ) : (
        <div className="grid gap-6 lg:grid-cols-[2fr_1fr]">
          <section aria-labelledby="listen" className="space-y-3">
            <h2 id="listen" className="text-lg font-semibold">
              {render.kind === "print" ? "Full track" : "Preview"} · mix v{render.mixVersion}
              {render.integratedLufs != null && <span className="num ml-2 text-sm font-normal text-ink-soft">{render.integratedLufs.toFixed(1)} LUFS integrated</span>}
            </h2>
            <MonitoringReminder />
            <audio
              ref={audioRef}
              controls
              preload="metadata"
              src={`/renders/${render.id}/audio`}
              className="w-full"
              data-testid="review-audio"
              onLoadedMetadata={(e) => setDurationS(e.currentTarget.duration)}
              onTimeUpdate={(e) => setPositionS(e.currentTarget.currentTime + offsetS)}
            />
            <div
              className="relative h-10 cursor-crosshair rounded-md bg-paper-deep"
              data-testid="review-timeline"
              role="slider"
              tabIndex={0}
              aria-label="Timeline: click to pick the moment of a comment"
              aria-valuemin={offsetS}
              aria-valuemax={spanS ? offsetS + spanS : offsetS}
              aria-valuenow={positionS}
              onClick={(e) => {
                if (!spanS) return;
                const box = e.currentTarget.getBoundingClientRect();
                const t = offsetS + ((e.clientX - box.left) / box.width) * spanS;
                seekTo(t);
                setCommentTime(formatClock(t));
              }}
              onKeyDown={(e) => {
                if (e.key === "Enter") setCommentTime(formatClock(positionS));
              }}
            >
              <div className="absolute inset-y-0 w-0.5 bg-ink" style={{ left: `${fraction(positionS) * 100}%` }} aria-hidden />
              {comments.map((c) => (
                <button
                  key={c.id}
                  type="button"
                  className={`absolute top-0 h-4 w-4 -translate-x-1/2 rounded-full border-2 border-paper ${c.resolvedAt ? "bg-ink-faint" : "bg-accent"}`}
                  style={{ left: `${fraction(c.timeS) * 100}%` }}
                  title={`${formatClock(c.timeS)} · ${c.body}`}
                  aria-label={`Play from the comment at ${formatClock(c.timeS)}`}
                  data-comment-marker={c.id}
                  data-time-s={c.timeS}
                  onClick={(e) => {
                    e.stopPropagation();
                    seekTo(c.timeS);
                    void audioRef.current?.play().catch(() => undefined);
                  }}
                />
              ))}
            </div>
            <p className="num text-xs text-ink-soft" data-testid="review-position">
              {formatClock(positionS)}
            </p>
            {earlierSentId && (
              <p className="text-sm">
                <Link to={`/releases/${release.id}/tracks/${track.id}/compare?a=render:${render.id}&b=render:${earlierSentId}`} className="text-accent-deep underline-offset-4 hover:underline">
                  Compare with an earlier version (A/B)
                </Link>
              </p>
            )}
          </section>

          <aside className="space-y-6">
            <section aria-labelledby="verdict" className="card space-y-3 p-4">
              <h2 id="verdict" className="text-lg font-semibold">
                Your verdict
              </h2>
              {review.status === "changes_asked" && review.changesNote && <blockquote className="border-l-2 border-accent pl-3 text-sm">{review.changesNote}</blockquote>}
              {!staff && underReview && review.status === "sent" ? (
                <VerdictForms renderId={render.id} busy={busy} />
              ) : (
                <p className="text-sm text-ink-soft">
                  {review.status === "approved" && review.approvedRenderId === render.id
                    ? "This master is approved."
                    : staff
                      ? "The client gives the verdict here."
                      : "Nothing is waiting for your verdict on this version."}
                </p>
              )}
            </section>

            <section aria-labelledby="comments" className="space-y-3">
              <h2 id="comments" className="text-lg font-semibold">
                Comments
              </h2>
              {/* A new key once a comment lands empties the form for the next one. */}
              <Form key={comments.length} method="post" className="card space-y-2 p-3">
                <input type="hidden" name="intent" value="comment" />
                <input type="hidden" name="renderId" value={render.id} />
                <label className="block text-sm">
                  At <span className="text-xs text-ink-soft">(m:ss; click the timeline to pick the moment)</span>
                  <input name="time" required value={commentTime} onChange={(e) => setCommentTime(e.currentTarget.value)} placeholder="1:05.5" className="field-input num mt-1" />
                </label>
                <button type="button" className="btn-quiet text-sm" onClick={() => setCommentTime(formatClock(positionS))}>
                  Use the current time
                </button>
                <label className="block text-sm">
                  Comment
                  <textarea name="body" rows={2} required maxLength={4000} className="field-input mt-1" />
                </label>
                <button type="submit" className="btn-quiet" disabled={busy}>
                  Add comment
                </button>
              </Form>
              <CommentThreads comments={comments} target={{ renderId: render.id }} busy={busy} onSeek={seekTo} />
            </section>
          </aside>
        </div>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Review ${data?.track.title ?? "track"} · Tidemark` }];

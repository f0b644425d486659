// /releases/:releaseId/room — the review room: one page per release where the
// client listens and gives a verdict, and where staff see exactly what the
// client sees. Every track with something sent, in running order; the chosen
// track's version in the app's player (one clock, ranged loading, the
// safe-level confirmation) with its stored waveform, comment markers and the
// song's time everywhere; "this version / the previous version" at matched
// loudness; the engineer's message; comments; Approve / Ask for changes.
// The data is app/models/review-room.server.ts (client-safe by construction);
// the steps post the same action as the compare page (page-action.server.ts).
import { useRef, useState } from "react";
import { Form, Link, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/review-room";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { reviewPageAction } from "../lib/review/page-action.server.ts";
import { getReviewRoom } from "../models/review-room.server.ts";
import { formatClock } from "../components/player/format.ts";
import { AbPlayer, type PlayerControl } from "../components/player/ab-player.tsx";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { FormNotice } from "../components/field.tsx";
import { CommentThreads } from "../components/review/comment-threads.tsx";
import { VerdictForms } from "../components/review/verdict-forms.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const url = new URL(request.url);
  const want = { trackId: url.searchParams.get("track"), renderId: url.searchParams.get("render") };
  const room = await getReviewRoom(user, release, want);
  // One address per track, so the page's forms post back to the track they are about.
  if (room.selected && want.trackId !== room.selected.track.id) {
    url.searchParams.set("track", room.selected.track.id);
    throw redirect(`${url.pathname}?${url.searchParams}`);
  }
  return { ...room, autoplay: url.searchParams.get("play") === "1" };
}

export async function action(args: Route.ActionArgs) {
  const trackId = new URL(args.request.url).searchParams.get("track") ?? "";
  return reviewPageAction({ request: args.request, params: { releaseId: args.params.releaseId, trackId } });
}

const dateText = (iso: string) => new Date(iso).toLocaleDateString("en-GB", { day: "numeric", month: "short", year: "numeric" });

export default function ReviewRoom({ loaderData, actionData }: Route.ComponentProps) {
  const { release, staff, tracks, selected, autoplay } = loaderData;
  const busy = useNavigation().state !== "idle";
  const control = useRef<PlayerControl | null>(null);
  const [commentTime, setCommentTime] = useState("");
  const [positionS, setPositionS] = useState(selected?.current.startS ?? 0);
  const error = actionData && typeof actionData === "object" && "error" in actionData ? String(actionData.error) : null;
  const base = `/releases/${release.id}/room`;
  const trackLink = (trackId: string, extra = "") => `${base}?track=${trackId}${extra}`;

  return (
    <div className="min-w-0 max-w-full">
      <BackLink to={`/releases/${release.id}`}>{release.title}</BackLink>
      <PageHeader eyebrow={staff ? "What the client sees" : release.title} title={staff ? `Review room: ${release.title}` : "Listen and review"} />
      {error && (
        <div className="mb-4">
          <FormNotice message={error} />
        </div>
      )}
      {tracks.length === 0 ? (
        <p className="card p-4 text-sm text-ink-soft" data-testid="room-empty">
          {staff ? "Nothing has been sent to the client yet. Send a render for review from its page." : "Nothing has been sent for you to hear yet. You will get an e-mail when the studio sends a master."}
        </p>
      ) : (
        <div className="grid min-w-0 gap-6 lg:grid-cols-[16rem_minmax(0,1fr)]">
          <nav aria-label="Tracks" className="min-w-0">
            <ol className="space-y-2" data-testid="room-tracks">
              {tracks.map((t) => {
                const open = selected?.track.id === t.id;
                return (
                  <li key={t.id} className={`card flex min-w-0 items-center gap-3 p-3 ${open ? "border-accent" : ""}`} data-track={t.id} data-status={t.status}>
                    <span className="num w-6 shrink-0 text-ink-soft">{t.position}</span>
                    <Link to={trackLink(t.id)} className="min-w-0 flex-1" aria-current={open ? "page" : undefined}>
                      <span className="block truncate font-medium">{t.title}</span>
                      <span className="block text-xs text-ink-soft" data-testid="room-track-status">
                        {t.statusText}
                      </span>
                    </Link>
                    <Link to={trackLink(t.id, "&play=1")} className="btn-quiet shrink-0 px-3" aria-label={`Play ${t.title}`}>
                      ▶
                    </Link>
                  </li>
                );
              })}
            </ol>
          </nav>

          {selected && (
            <section aria-labelledby="now" className="min-w-0 space-y-4">
              <div>
                <h2 id="now" className="text-xl font-semibold break-words">
                  {selected.track.title}
                </h2>
                <p className="text-sm text-ink-soft">
                  <span data-testid="review-status">{selected.review.statusText}</span> · you are hearing <strong data-testid="room-version-name">{selected.current.name}</strong>
                </p>
              </div>

              {selected.current.message && (
                <blockquote className="card border-l-4 border-accent p-3 text-sm" data-testid="engineer-message">
                  <p className="text-xs text-ink-soft">{selected.current.sentBy ? `${selected.current.sentBy} wrote` : "The studio wrote"}:</p>
                  <p className="mt-1 whitespace-pre-line">{selected.current.message}</p>
                </blockquote>
              )}

              <AbPlayer
                key={`${selected.current.renderId}:${selected.sideBySide ? selected.previous?.renderId : ""}`}
                plain
                a={{
                  url: `/renders/${selected.current.renderId}/audio`,
                  label: "This version",
                  offsetS: selected.current.startS,
                  integratedLufs: selected.current.matchLufs,
                  peaks: selected.current.peaks,
                }}
                b={
                  selected.sideBySide && selected.previous
                    ? {
                        url: `/renders/${selected.previous.renderId}/audio`,
                        label: "The previous version",
                        offsetS: selected.previous.startS,
                        integratedLufs: selected.previous.matchLufs,
                        peaks: selected.previous.peaks,
                      }
                    : null
                }
                comments={selected.comments.map((c) => ({ id: c.id, timeS: c.timeS, body: c.body, resolved: Boolean(c.resolvedAt) }))}
                controlRef={control}
                onReady={(player) => {
                  if (autoplay) player.playFrom(selected.current.startS);
                }}
                onSeek={(t) => setCommentTime(formatClock(t))}
                onCommentClick={(c) => control.current?.playFrom(c.timeS)}
                onPositionChange={setPositionS}
              />
              {selected.previous && !selected.sideBySide && (
                <p className="text-sm text-ink-soft">
                  The previous version covers another stretch of the song.{" "}
                  <Link to={trackLink(selected.track.id, `&render=${selected.previous.renderId}`)} className="text-accent-deep underline-offset-4 hover:underline">
                    Listen to {selected.previous.name}
                  </Link>
                </p>
              )}

              {/* A place for the release's running order with references (album view), when it joins the room. */}
              <div data-slot="album-view" />

              <div className="grid min-w-0 gap-6 xl:grid-cols-2">
                <section aria-labelledby="verdict" className="card min-w-0 space-y-3 p-4">
                  <h3 id="verdict" className="text-lg font-semibold">
                    {staff ? "The client's verdict" : "Your verdict"}
                  </h3>
                  {selected.review.changesNote && <blockquote className="border-l-2 border-accent pl-3 text-sm">{selected.review.changesNote}</blockquote>}
                  {!staff && selected.verdictOpen ? (
                    <VerdictForms renderId={selected.current.renderId} busy={busy} />
                  ) : (
                    <p className="text-sm text-ink-soft" data-testid="verdict-state">
                      {selected.review.status === "approved"
                        ? `${staff ? "The client approved" : "You approved"} version ${selected.review.approvedVersion}. The final files are made from exactly those settings.`
                        : staff
                          ? "The client gives the verdict here."
                          : selected.review.status === "changes_asked"
                            ? "You asked for changes. The studio will send a new version."
                            : "Nothing is waiting for your verdict on this version."}
                    </p>
                  )}
                </section>

                <section aria-labelledby="comments" className="min-w-0 space-y-3">
                  <h3 id="comments" className="text-lg font-semibold">
                    Comments
                  </h3>
                  <Form key={selected.comments.length} method="post" className="card space-y-2 p-3">
                    <input type="hidden" name="intent" value="comment" />
                    <input type="hidden" name="renderId" value={selected.current.renderId} />
                    <label className="block text-sm">
                      At <span className="text-xs text-ink-soft">(time in the song; click the waveform to pick it)</span>
                      <input
                        name="time"
                        required
                        value={commentTime}
                        onChange={(e) => setCommentTime(e.currentTarget.value)}
                        placeholder={formatClock(selected.current.startS)}
                        className="field-input num mt-1"
                        data-testid="comment-time"
                      />
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
                  <CommentThreads comments={selected.comments} target={{ renderId: selected.current.renderId }} busy={busy} onSeek={(t) => control.current?.playFrom(t)} />
                </section>
              </div>

              {selected.versions.length > 1 && (
                <section aria-labelledby="versions" className="space-y-2">
                  <h3 id="versions" className="text-lg font-semibold">
                    Everything sent for this track
                  </h3>
                  <ol className="space-y-1 text-sm" data-testid="room-versions">
                    {selected.versions.map((v) => (
                      <li key={v.renderId}>
                        {v.renderId === selected.current.renderId ? (
                          <strong>{v.name}</strong>
                        ) : (
                          <Link to={trackLink(selected.track.id, `&render=${v.renderId}`)} className="text-accent-deep underline-offset-4 hover:underline">
                            {v.name}
                          </Link>
                        )}{" "}
                        <span className="text-ink-soft">· sent {dateText(v.sentAt)}</span>
                      </li>
                    ))}
                  </ol>
                </section>
              )}
            </section>
          )}
        </div>
      )}
    </div>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Listen and review · ${data?.release.title ?? "release"} · Tidemark` }];

// Compare two sources of a track: renders and (for staff) its mix versions,
// e.g. a render against its own mix or two versions of a mix. The A/B player
// (level-matched, one clock), a table of the two analyses, the traces of
// both on one time axis (gain reduction per stage for renders; a mix has
// none and shows its loudness line only; zoomed to the player's loop on
// request, `?zoom=`) and, when both are renders, the
// chain parameters that differ; comments pinned to times, and the review
// step: send A for review (staff), approve it or ask for changes (client).
import { useState } from "react";
import { Form, redirect, useNavigation, useSearchParams } from "react-router";
import { roomPath } from "../lib/review/room-path.ts";
import type { Route } from "./+types/compare";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { isStaff } from "../lib/roles.ts";
import { alignTraces, formatZoom, parseZoom, type AlignedTraces } from "../lib/compare/traces.ts";
import { labelChanges, type LabelledChange } from "../lib/compare/chain-changes.ts";
import { choosePair } from "../lib/compare/sources.ts";
import { reviewPageAction, type ReviewActionData } from "../lib/review/page-action.server.ts";
import { diffParams } from "../models/chain.server.ts";
import { listComments } from "../models/comment.server.ts";
import { listCompareSources, referenceOffsetS, sourceAnalysis, sourceSpectrum, sourceTraces, type CompareSource } from "../models/compare-source.server.ts";
import { parseAlignment } from "../lib/compare/reference-alignment.ts";
import { SpectrumChart } from "../components/spectrum/spectrum-chart.tsx";
import { shownReviewState } from "../lib/review/state.ts";
import { getTrackReview, sendWarning } from "../models/review.server.ts";
import { SendForReviewForm } from "../components/review/send-form.tsx";
import { getTrack } from "../models/track.server.ts";
import { AbPlayer } from "../components/player/ab-player.tsx";
import { AnalysesCompare } from "../components/player/analyses-compare.tsx";
import { formatClock } from "../components/player/format.ts";
import { TraceCharts } from "../components/player/trace-charts.tsx";
import { BackLink } from "../components/page-header.tsx";
import { ReviewHeader } from "../components/review/review-header.tsx";
import { CommentThreads, TargetInputs } from "../components/review/comment-threads.tsx";
import { VerdictForms } from "../components/review/verdict-forms.tsx";

const MAX_TRACE_POINTS = 1500;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const staff = isStaff(user.role);
  // A client listens in the review room, which always plays; comparing sources is the studio's page.
  if (!staff) throw redirect(roomPath(release.id, track.id, new URL(request.url).searchParams.get("a")));
  const sources = await listCompareSources(user, { id: track.id, releaseId: release.id });
  const url = new URL(request.url);
  const pair = choosePair(sources, { a: url.searchParams.get("a"), b: url.searchParams.get("b") });
  // A reference is lined up with the other source: at the points picked, else at the loudest 30 s of each.
  let alignment: { masterS: number; referenceS: number; picked: boolean } | null = null;
  const refSlot = pair.b?.type === "reference" && pair.a?.type !== "reference" ? "b" : pair.a?.type === "reference" && pair.b && pair.b.type !== "reference" ? "a" : null;
  if (refSlot && pair.a && pair.b) {
    const reference = pair[refSlot]!;
    const master = refSlot === "b" ? pair.a : pair.b;
    const picked = parseAlignment(url.searchParams);
    const found = await referenceOffsetS(master, reference, picked);
    if (found) {
      pair[refSlot] = { ...reference, offsetS: found.offsetS };
      alignment = { masterS: found.masterS, referenceS: found.referenceS, picked: picked !== null };
    }
  }
  const { a, b } = pair;
  const review = await getTrackReview(track.id);

  let aligned: AlignedTraces | null = null;
  let changes: LabelledChange[] | null = null;
  if (staff && a && b) {
    const [ta, tb] = await Promise.all([sourceTraces(a), sourceTraces(b)]);
    if (ta && tb) {
      const sa = { traces: ta, offsetS: a.offsetS };
      const sb = { traces: tb, offsetS: b.offsetS };
      aligned = alignTraces(sa, sb, { maxPoints: MAX_TRACE_POINTS, shared: true });
      // Zoomed to a region (the player's loop): the traces of that stretch alone, at up to the full grid's detail.
      const zoom = parseZoom(url.searchParams.get("zoom"));
      const startS = zoom && Math.max(zoom.startS, aligned.startS);
      const endS = zoom && Math.min(zoom.endS, aligned.endS);
      if (startS !== null && endS !== null && endS - startS >= 0.05) aligned = { ...alignTraces(sa, sb, { maxPoints: MAX_TRACE_POINTS, startS, endS }), zoomed: true };
    }
    // What changed going from B's chain to A's; only two renders have chains to set side by side.
    if (a.render && b.render) changes = labelChanges(diffParams(b.render.params, a.render.params), b.render.params, a.render.params);
  }
  const [analysisA, analysisB] = a && b ? await Promise.all([sourceAnalysis(a), sourceAnalysis(b)]) : [null, null];
  const [spectrumA, spectrumB] = staff && a && b ? await Promise.all([sourceSpectrum(a), sourceSpectrum(b)]) : [null, null];
  const view = (s: CompareSource) => ({
    key: s.key,
    type: s.type,
    id: s.id,
    label: s.label,
    offsetS: s.offsetS,
    integratedLufs: s.integratedLufs,
    sentForReview: s.sentForReview,
    audioUrl: s.audioUrl,
    preview: s.render?.kind === "preview",
  });
  return {
    release: { id: release.id, title: release.title, clientName: release.clientName },
    track: { id: track.id, title: track.title },
    staff,
    choices: sources.map(view),
    a: a && view(a),
    b: b && view(b),
    analyses: { a: analysisA, b: analysisB },
    spectra: { a: spectrumA, b: spectrumB },
    alignment,
    review: shownReviewState(review.state),
    comments: a && a.type !== "reference" ? await listComments(a.type === "render" ? { renderId: a.id } : { mixId: a.id }) : [],
    aligned,
    changes,
    sameChain: a?.render && b?.render ? a.render.chainRevisionId === b.render.chainRevisionId : false,
    sendWarning: staff && a?.type === "render" ? await sendWarning(a.id) : null,
  };
}

export async function action(args: Route.ActionArgs) {
  return reviewPageAction(args);
}

export default function Compare({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, staff, choices, a, b, analyses, review, comments, aligned, changes, sameChain, spectra, alignment } = loaderData;
  const [positionS, setPositionS] = useState<number | null>(null);
  const [commentTime, setCommentTime] = useState("");
  const [loop, setLoop] = useState<{ startS: number; endS: number } | null>(null);
  const [, setSearchParams] = useSearchParams();
  const busy = useNavigation().state !== "idle";
  // The loader sends the zoomed stretch's traces; the player stays as it is (same sources, same key).
  const zoomTo = (region: { startS: number; endS: number } | null) =>
    setSearchParams(
      (params) => {
        if (region) params.set("zoom", formatZoom(region));
        else params.delete("zoom");
        return params;
      },
      { replace: true, preventScrollReset: true },
    );
  const aRender = a?.type === "render" ? a : null;
  const underReview = aRender && review.underReviewRenderId === aRender.id;
  const error = (actionData as ReviewActionData | undefined)?.error;
  const renderChoices = choices.filter((c) => c.type === "render");
  const mixChoices = choices.filter((c) => c.type === "mix");
  const referenceChoices = choices.filter((c) => c.type === "reference");
  const target = a && a.type !== "reference" ? (a.type === "render" ? { renderId: a.id } : { mixId: a.id }) : null;

  return (
    <>
      <BackLink to={`/releases/${release.id}/tracks/${track.id}`}>{track.title}</BackLink>
      <ReviewHeader releaseTitle={release.title} status={review.status} title={`Compare ${track.title}`} error={error} />

      {choices.length > 0 && (
        <Form method="get" className="mb-4 flex flex-wrap items-end gap-3" aria-label="Sources">
          {(["a", "b"] as const).map((slot) => (
            <label key={slot} className="text-sm">
              <span className="mb-1 block text-xs tracking-wide text-ink-soft uppercase">{slot}</span>
              <select name={slot} defaultValue={(slot === "a" ? a : b)?.key} className="field-input">
                {renderChoices.length > 0 && (
                  <optgroup label="Renders">
                    {renderChoices.map((c) => (
                      <option key={c.key} value={c.key}>
                        {c.label}
                        {c.sentForReview ? " · sent" : ""}
                      </option>
                    ))}
                  </optgroup>
                )}
                {mixChoices.length > 0 && (
                  <optgroup label="Mixes (unprocessed)">
                    {mixChoices.map((c) => (
                      <option key={c.key} value={c.key}>
                        {c.label}
                      </option>
                    ))}
                  </optgroup>
                )}
                {referenceChoices.length > 0 && (
                  <optgroup label="References (studio only)">
                    {referenceChoices.map((c) => (
                      <option key={c.key} value={c.key}>
                        {c.label}
                      </option>
                    ))}
                  </optgroup>
                )}
              </select>
            </label>
          ))}
          <button type="submit" className="btn-quiet">
            Compare
          </button>
        </Form>
      )}

      {alignment && a && b && <ReferenceAlignment alignment={alignment} a={a.key} b={b.key} referenceIsA={a.type === "reference"} />}

      {a && b ? (
        <AbPlayer
          key={`${a.key}:${b.key}`}
          a={{ url: a.audioUrl, label: a.label, offsetS: a.offsetS, integratedLufs: a.integratedLufs }}
          b={{ url: b.audioUrl, label: b.label, offsetS: b.offsetS, integratedLufs: b.integratedLufs }}
          comments={comments.map((c) => ({ id: c.id, timeS: c.timeS, body: c.body, resolved: c.resolvedAt !== null }))}
          onSeek={(t) => setCommentTime(formatClock(t))}
          onPositionChange={setPositionS}
          onLoopChange={setLoop}
        />
      ) : (
        <p className="card p-4 text-sm text-ink-soft">
          {choices.length === 0 ? "Nothing to listen to yet: no finished render." : "A comparison needs two sources; only one is ready so far."}
        </p>
      )}

      <div className="mt-6 grid gap-6 lg:grid-cols-[2fr_1fr]">
        <div className="space-y-6">
          {a && b && (
            <section aria-labelledby="analyses">
              <h2 id="analyses" className="mb-2 text-lg font-semibold">
                Analyses
              </h2>
              <AnalysesCompare a={analyses.a} b={analyses.b} labels={{ a: a.label, b: b.label }} />
              {(a.preview || b.preview) && <p className="mt-1 text-xs text-ink-soft">A preview's figures are of its region only.</p>}
            </section>
          )}
          {staff && a && b && (spectra.a || spectra.b) && (
            <section aria-labelledby="spectrum">
              <h2 id="spectrum" className="mb-2 text-lg font-semibold">
                Spectrum
              </h2>
              <SpectrumChart
                series={[
                  { key: "a", label: `A · ${a.label}`, bands: spectra.a },
                  { key: "b", label: `B · ${b.label}`, bands: spectra.b },
                ]}
              />
              {(a.preview || b.preview) && <p className="mt-1 text-xs text-ink-soft">A preview's spectrum is of its region only.</p>}
            </section>
          )}
          {staff && aligned && a && b && (
            <section aria-labelledby="traces">
              <h2 id="traces" className="mb-2 text-lg font-semibold">
                Gain reduction and loudness
              </h2>
              <TraceCharts aligned={aligned} positionS={positionS} labels={{ a: a.label, b: b.label }} processed={{ a: a.type === "render", b: b.type === "render" }} loop={loop} onZoom={zoomTo} />
            </section>
          )}
          {staff && changes && (
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
          {aRender && (
            <section aria-labelledby="review" className="card space-y-3 p-4">
              <h2 id="review" className="text-lg font-semibold">
                Review of A
              </h2>
              {review.status === "changes_asked" && review.changesNote && <blockquote className="border-l-2 border-accent pl-3 text-sm">{review.changesNote}</blockquote>}
              {staff ? (
                <SendForReviewForm renderId={aRender.id} clientName={release.clientName} warning={loaderData.sendWarning} busy={busy} label={underReview ? "Send A again" : "Send A for review"} />
              ) : underReview && review.status === "sent" ? (
                <VerdictForms renderId={aRender.id} busy={busy} />
              ) : (
                <p className="text-sm text-ink-soft">{review.status === "approved" ? "You approved this master." : "Nothing is waiting for your verdict."}</p>
              )}
            </section>
          )}

          {a && target && (
            <section aria-labelledby="comments" className="space-y-3">
              <h2 id="comments" className="text-lg font-semibold">
                Comments on A
              </h2>
              {a.type === "mix" && <p className="text-xs text-ink-soft">Notes on a mix stay in the studio: clients do not see them.</p>}
              <Form key={comments.length} method="post" className="card space-y-2 p-3">
                <input type="hidden" name="intent" value="comment" />
                <TargetInputs target={target} />
                <label className="block text-sm">
                  At <span className="text-xs text-ink-soft">(click the waveform to pick the moment)</span>
                  <input name="time" required value={commentTime} onChange={(e) => setCommentTime(e.currentTarget.value)} placeholder="1:05.5" className="field-input num mt-1" />
                </label>
                <button type="button" className="btn-quiet text-sm" onClick={() => setCommentTime(formatClock(positionS ?? a.offsetS))}>
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
              <CommentThreads comments={comments} target={target} busy={busy} />
            </section>
          )}
        </aside>
      </div>
    </>
  );
}

/**
 * How a reference lines up with the master: the loudest 30 s of each by
 * default, or two moments picked here (A's time on the page's axis, the
 * reference's own time). Level matching is the player's: the louder of the
 * two is turned down to the other's loudness, nothing is ever turned up.
 */
function ReferenceAlignment({ alignment, a, b, referenceIsA }: { alignment: { masterS: number; referenceS: number; picked: boolean }; a: string; b: string; referenceIsA: boolean }) {
  return (
    <Form method="get" className="mb-4 flex flex-wrap items-end gap-3 text-sm" aria-label="Line up the reference" data-testid="reference-alignment">
      <input type="hidden" name="a" value={a} />
      <input type="hidden" name="b" value={b} />
      <p className="basis-full text-ink-soft">
        {alignment.picked ? "Lined up at the moments picked" : "Lined up at the loudest 30 s of each"}: {referenceIsA ? "B" : "A"} at{" "}
        <span className="num">{formatClock(alignment.masterS)}</span> with the reference at <span className="num">{formatClock(alignment.referenceS)}</span>. Levels are
        matched by loudness: the louder one is turned down, never the quieter one up.
      </p>
      <label>
        <span className="mb-1 block text-xs text-ink-soft">Master at (s)</span>
        <input name="at" type="number" min={0} step={0.1} defaultValue={alignment.masterS.toFixed(1)} className="field-input num w-28" />
      </label>
      <label>
        <span className="mb-1 block text-xs text-ink-soft">Reference at (s)</span>
        <input name="refAt" type="number" min={0} step={0.1} defaultValue={alignment.referenceS.toFixed(1)} className="field-input num w-28" />
      </label>
      <button type="submit" className="btn-quiet">
        Line up here
      </button>
      {alignment.picked && (
        <a href={`?a=${encodeURIComponent(a)}&b=${encodeURIComponent(b)}`} className="text-accent-deep underline-offset-4 hover:underline">
          Back to the loudest 30 s
        </a>
      )}
    </Form>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Compare ${data?.track.title ?? "track"} · Tidemark` }];

// One render: its state (a progress bar polled once a second while it is
// queued or running), then input beside output analyses, the gain-reduction
// traces, a player and the downloads.
import { useEffect } from "react";
import { Form, Link, redirect, useFetcher, useRevalidator } from "react-router";
import { roomPath } from "../lib/review/room-path.ts";
import type { Route } from "./+types/render";
import { isStaff, STAFF } from "../lib/roles.ts";
import { requireTrackRender } from "../lib/render-access.server.ts";
import { mayDownloadRender } from "../lib/render-visibility.server.ts";
import { FINALS_LOCKED_MESSAGE } from "../lib/billing/finals.ts";
import { describeRevision } from "../lib/render-views.server.ts";
import { readChartTraces } from "../lib/render-traces.server.ts";
import { cancelRender } from "../models/render.server.ts";
import { ReviewActionError, ReviewForbiddenError, sendForReview, sendWarning } from "../models/review.server.ts";
import { reviewRoomLink } from "../lib/review/page-action.server.ts";
import { SendForReviewForm } from "../components/review/send-form.tsx";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { RenderProgress } from "../components/render/progress-bar.tsx";
import { AnalysesTable } from "../components/render/analyses-table.tsx";
import { RenderTraces } from "../components/render/render-traces.tsx";
import { fmt } from "../components/render/format.ts";
import { MonitoringReminder } from "../components/player/monitoring-notice.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release, track, render, mix } = await requireTrackRender(request, params);
  // A client hears a sent render in the review room: no mix names, chains or gain-reduction charts.
  if (!isStaff(user.role)) throw redirect(roomPath(release.id, track.id, render.id));
  const [chain, traces, downloadOpen, warning] = await Promise.all([
    describeRevision(render.chainRevisionId),
    render.state === "done" ? readChartTraces(render.tracesKey, render.region?.startS ?? 0) : null,
    mayDownloadRender(user, render, release.id),
    render.state === "done" ? sendWarning(render.id) : null,
  ]);
  return {
    release: { id: release.id, title: release.title, clientName: release.clientName },
    track: { id: track.id, title: track.title },
    mix: { id: mix.id, version: mix.version, originalName: mix.originalName },
    chain,
    render: {
      id: render.id,
      kind: render.kind,
      state: render.state,
      progress: render.progress,
      error: render.error,
      region: render.region,
      targetLufs: render.targetLufs,
      inputAnalysis: render.inputAnalysis,
      outputAnalysis: render.outputAnalysis,
      output: render.output && { sizeBytes: render.output.sizeBytes, sampleRateHz: render.output.sampleRateHz, bitDepth: render.output.bitDepth, channels: render.output.channels },
    },
    traces,
    downloadOpen,
    sendWarning: warning,
    staff: isStaff(user.role),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release, track, render } = await requireTrackRender(request, params, STAFF);
  const form = await request.formData();
  if (form.get("intent") === "send") {
    const link = reviewRoomLink(release.id, track.id, render.id);
    try {
      await sendForReview({ renderId: render.id, senderId: user.id, message: String(form.get("message") ?? "").slice(0, 4000), link, confirmNewReview: form.get("confirmNewReview") === "yes" });
      return { sent: true as const };
    } catch (error) {
      if (error instanceof ReviewForbiddenError) throw new Response("Not Found", { status: 404 });
      if (error instanceof ReviewActionError) return Response.json({ sendError: error.message }, { status: 409 });
      throw error;
    }
  }
  if (form.get("intent") !== "cancel") return Response.json({ error: "Unknown action." }, { status: 400 });
  const after = await cancelRender(render.id);
  return { cancelled: after?.state === "cancelled" };
}

type Progress = { id: string; state: string; progress: number; error: string | null };

export default function RenderPage({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, mix, chain, render, traces, downloadOpen, staff } = loaderData;
  const base = `/releases/${release.id}/tracks/${track.id}`;
  const here = `${base}/renders/${render.id}`;
  const poll = useFetcher<Progress>();
  const revalidator = useRevalidator();
  const live: Progress = poll.data?.id === render.id ? poll.data : render;
  const active = live.state === "queued" || live.state === "running";

  // While the worker works, ask for the progress once a second; once it ends, reload the page's data for the results.
  useEffect(() => {
    if (!active) return;
    const timer = setInterval(() => {
      if (poll.state === "idle") poll.load(`${here}/progress`);
    }, 1000);
    return () => clearInterval(timer);
  }, [active, here, poll]);
  useEffect(() => {
    if (poll.data?.id === render.id && poll.data.state !== render.state && !active && revalidator.state === "idle") void revalidator.revalidate();
  }, [poll.data, render.state, active, revalidator]);

  const title = `${render.kind === "print" ? "Print" : "Preview"} of v${mix.version}`;
  return (
    <>
      <BackLink to={base}>{track.title}</BackLink>
      <PageHeader
        eyebrow={release.title}
        title={title}
        actions={
          staff && render.state === "done" ? (
            <>
              {/* Before and after, level-matched: the master against the mix it was made from. */}
              <Link to={`${base}/compare?a=render:${render.id}&b=mix:${mix.id}`} className="btn-quiet">
                Compare with its mix
              </Link>
              {render.kind === "preview" && (
                <Link to={`${base}/renders/new?mix=${mix.id}&kind=print`} className="btn-quiet">
                  Render a print
                </Link>
              )}
            </>
          ) : undefined
        }
      />
      <dl className="card grid max-w-3xl gap-4 p-5 text-sm sm:grid-cols-4">
        <div>
          <dt className="text-xs tracking-wide text-ink-soft uppercase">Mix</dt>
          <dd className="mt-1 truncate" title={mix.originalName}>v{mix.version} · {mix.originalName}</dd>
        </div>
        <div>
          <dt className="text-xs tracking-wide text-ink-soft uppercase">Chain</dt>
          <dd className="mt-1">{chain ? `${chain.chainName} · rev ${chain.revision}` : "—"}</dd>
        </div>
        <div>
          <dt className="text-xs tracking-wide text-ink-soft uppercase">Region</dt>
          <dd className="num mt-1">{render.kind === "print" ? "whole mix" : render.region ? `${render.region.startS.toFixed(1)}–${render.region.endS.toFixed(1)} s` : "loudest 30 s"}</dd>
        </div>
        <div>
          <dt className="text-xs tracking-wide text-ink-soft uppercase">Target</dt>
          <dd className="num mt-1">{render.targetLufs == null ? "—" : fmt(render.targetLufs, "LUFS")}</dd>
        </div>
      </dl>

      <section aria-labelledby="state" className="mt-6 max-w-3xl">
        <h2 id="state" className="sr-only">State</h2>
        <div className="card flex flex-wrap items-center gap-4 p-4" data-testid="render-state" data-state={live.state}>
          <div className="min-w-48 flex-1">
            <RenderProgress state={live.state} progress={live.progress} />
          </div>
          {staff && active && (
            <Form method="post">
              <input type="hidden" name="intent" value="cancel" />
              <button type="submit" className="btn-quiet">
                Cancel render
              </button>
            </Form>
          )}
        </div>
        {live.state === "failed" && (
          <p className="mt-3 rounded-md border border-danger/40 bg-danger-wash px-3 py-2 text-sm text-danger" role="alert">
            The render failed: {live.error ?? "no reason was given"}
          </p>
        )}
      </section>

      {render.state === "done" && (
        <>
          <section aria-labelledby="listen" className="mt-8 max-w-3xl">
            <h2 id="listen" className="text-lg font-semibold">
              Listen and download
            </h2>
            <div className="mt-3 space-y-2">
              <MonitoringReminder />
              {/* biome-ignore lint/a11y/useMediaCaption: a master has no words to caption */}
              <audio controls preload="metadata" src={`${here}/download?inline=1`} className="w-full max-w-full" />
              <p className="text-sm">
                {downloadOpen ? (
                  <a href={`${here}/download`} download className="btn-primary inline-block">
                    Download {render.kind} (WAV)
                  </a>
                ) : (
                  <span className="text-ink-soft" data-testid="download-locked">
                    {FINALS_LOCKED_MESSAGE}
                  </span>
                )}
                {render.output && (
                  <span className="num ml-3 text-ink-soft">
                    {render.output.bitDepth}-bit · {render.output.sampleRateHz / 1000} kHz · {(render.output.sizeBytes / 1024 ** 2).toFixed(1)} MB
                  </span>
                )}
              </p>
            </div>
          </section>
          {staff && (
            <section aria-labelledby="send" className="mt-8 max-w-3xl">
              <h2 id="send" className="text-lg font-semibold">
                Send for review
              </h2>
              <div className="card mt-3 p-4">
              <SendForReviewForm clientName={release.clientName} warning={loaderData.sendWarning}>
                {actionData && "sent" in actionData && (
                  <p role="status" className="text-sm text-accent-deep">
                    Sent. The client has been e-mailed a link to listen.
                  </p>
                )}
                {actionData && "sendError" in actionData && (
                  <p role="alert" className="text-sm text-danger">
                    {String(actionData.sendError)}
                  </p>
                )}
              </SendForReviewForm>
              </div>
            </section>
          )}
          <section aria-labelledby="analyses" className="mt-8">
            <h2 id="analyses" className="mb-3 text-lg font-semibold">
              Analyses
            </h2>
            <AnalysesTable input={render.inputAnalysis} output={render.outputAnalysis} />
          </section>
          <section aria-labelledby="traces" className="mt-8 max-w-4xl">
            <h2 id="traces" className="mb-3 text-lg font-semibold">
              Gain reduction
            </h2>
            {traces ? <RenderTraces traces={traces} /> : <p className="text-sm text-ink-soft">No traces were stored for this render.</p>}
          </section>
        </>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data ? `${data.render.kind === "print" ? "Print" : "Preview"} · ${data.track.title}` : "Render"} · Tidemark` }];

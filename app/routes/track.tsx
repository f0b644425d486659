import { useEffect } from "react";
import { data, Link, redirect, useRevalidator } from "react-router";
import type { Route } from "./+types/track";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { isStaff, STAFF } from "../lib/roles.ts";
import { getTrack } from "../models/track.server.ts";
import { roomPath } from "../lib/review/room-path.ts";
import { listMixVersions } from "../models/mix.server.ts";
import { listTrackRenders } from "../lib/render-views.server.ts";
import { listTrackChainsWithRevision } from "../lib/chain-access.server.ts";
import { formatBytes, receiveMixUpload, UploadError, uploadMaxBytes } from "../lib/upload.server.ts";
import { MultipartError, parseMultipartFiles } from "../lib/multipart-files.server.ts";
import { formatIsrc } from "../schemas/track.ts";
import { BackLink, PageHeader } from "../components/page-header.tsx";
import { MixUploadForm } from "../components/upload/mix-upload-form.tsx";
import { MixVersionsTable } from "../components/upload/mix-versions-table.tsx";
import { RenderList } from "../components/render/render-list.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  // A client hears and reviews in the review room; this page (mixes, renders, chains) is the studio's.
  if (!isStaff(user.role)) throw redirect(roomPath(release.id, track.id));
  const staff = true;
  const [mixes, renders, chains] = await Promise.all([listMixVersions(track.id), listTrackRenders(track.id, user), listTrackChainsWithRevision(track.id)]);
  return {
    release: { id: release.id, title: release.title, clientName: release.clientName },
    track,
    staff,
    chains: chains.map((c) => ({ id: c.id, name: c.name, revision: c.revision, updatedAt: c.updatedAt.toISOString() })),
    mixes: mixes.map((m) => ({
      id: m.id,
      version: m.version,
      originalName: m.originalName,
      sizeBytes: m.sizeBytes,
      durationSeconds: m.durationSeconds,
      format: `${m.sampleFormat === "float" ? "float" : "PCM"} ${m.bitDepth}-bit · ${m.sampleRateHz / 1000} kHz · ${m.channels === 1 ? "mono" : m.channels === 2 ? "stereo" : `${m.channels} ch`}`,
      analysisState: m.analysisState,
      analysisError: m.analysisError,
      integratedLufs: (m.analysis as { integratedLufs?: number } | null)?.integratedLufs ?? null,
      truePeakDbtp: (m.analysis as { truePeakDbtp?: number } | null)?.truePeakDbtp ?? null,
      createdAt: m.createdAt.toISOString(),
    })),
    renders,
    uploadLimit: formatBytes(uploadMaxBytes()),
  };
}

/** The upload without scripts: a multipart post of one or more files. */
export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  const uploaded: number[] = [];
  try {
    await parseMultipartFiles(request, { maxFiles: 20 }, async (fileName, stream) => {
      const mix = await receiveMixUpload({ trackId: track.id, userId: user.id, fileName, body: stream });
      uploaded.push(mix.version);
    });
  } catch (error) {
    if (error instanceof UploadError) return data({ error: error.message, uploaded }, { status: error.status });
    if (error instanceof MultipartError) return data({ error: error.message, uploaded }, { status: 400 });
    throw error;
  }
  if (uploaded.length === 0) return data({ error: "Choose a WAV file to upload.", uploaded }, { status: 400 });
  return redirect(`/releases/${release.id}/tracks/${track.id}`, 303);
}

export default function Track({ loaderData, actionData }: Route.ComponentProps) {
  const { release, track, staff, mixes, renders, chains, uploadLimit } = loaderData;
  const base = `/releases/${release.id}/tracks/${track.id}`;
  const working = mixes.some((m) => m.analysisState === "pending" || m.analysisState === "running") || renders.some((r) => r.state === "queued" || r.state === "running");
  const revalidator = useRevalidator();
  // Analyses and renders finish in the worker: look again every 2 s until none is left.
  useEffect(() => {
    if (!working) return;
    const timer = setInterval(() => {
      if (revalidator.state === "idle") void revalidator.revalidate();
    }, 2000);
    return () => clearInterval(timer);
  }, [working, revalidator]);
  return (
    <>
      <BackLink to={`/releases/${release.id}`}>{release.title}</BackLink>
      <PageHeader
        eyebrow={
          <>
            {release.clientName} · track <span className="num">{track.position}</span>
          </>
        }
        title={track.title}
        actions={
          staff && (
            <>
              <Link to={`/releases/${release.id}/tracks/${track.id}/chains/new`} className="btn-quiet">
                New chain from template
              </Link>
              <Link to={`/releases/${release.id}/tracks/${track.id}/edit`} className="btn-quiet">
                Edit track
              </Link>
            </>
          )
        }
      />
      <dl className="card grid max-w-2xl gap-4 p-5 sm:grid-cols-3">
        <div>
          <dt className="text-xs tracking-wide text-ink-soft uppercase">Position</dt>
          <dd className="num mt-1">{track.position}</dd>
        </div>
        <div className="sm:col-span-2">
          <dt className="text-xs tracking-wide text-ink-soft uppercase">ISRC</dt>
          <dd className="num mt-1">{track.isrc ? formatIsrc(track.isrc) : "—"}</dd>
        </div>
      </dl>
      <section aria-labelledby="mixes" className="mt-8">
        <h2 id="mixes" className="text-lg font-semibold">
          Mixes
        </h2>
        {mixes.length === 0 ? (
          <p className="mt-2 text-sm text-ink-soft">No mixes uploaded for this track yet.</p>
        ) : (
          <MixVersionsTable mixes={mixes} downloadBase={staff ? `${base}/mixes` : undefined} />
        )}
        {staff && <MixUploadForm uploadUrl={`${base}/mixes`} maxBytesLabel={uploadLimit} error={actionData?.error} />}
      </section>
      {staff && (
        <section aria-labelledby="chains" className="mt-8">
          <h2 id="chains" className="text-lg font-semibold">
            Chains
          </h2>
          {chains.length === 0 ? (
            <p className="mt-2 text-sm text-ink-soft">No chain for this track yet: start one from a template.</p>
          ) : (
            <ul className="card mt-2 max-w-2xl divide-y divide-rule text-sm" aria-label="Chains of this track">
              {chains.map((c) => (
                <li key={c.id} className="flex flex-wrap items-center justify-between gap-2 px-4 py-3">
                  <span>
                    <span className="font-medium">{c.name}</span>
                    <span className="text-ink-soft">
                      {" "}
                      · revision <span className="num">{c.revision}</span> · {c.updatedAt.slice(0, 10)}
                    </span>
                  </span>
                  <Link to={`/chains/${c.id}`} className="btn-primary" aria-label={`Open ${c.name} at the desk`}>
                    Open at the desk
                  </Link>
                </li>
              ))}
            </ul>
          )}
        </section>
      )}
      <section aria-labelledby="renders" className="mt-8">
        <div className="flex flex-wrap items-center justify-between gap-3">
          <h2 id="renders" className="text-lg font-semibold">
            Renders
          </h2>
          <div className="flex flex-wrap gap-2">
            {/* Staff and the client alike: the compare page shows each only what they may hear (mixes for staff only). */}
            {(renders.length > 0 || (staff && mixes.length > 1)) && (
              <Link to={`${base}/compare`} className="btn-quiet">
                Compare
              </Link>
            )}
            {renders.length > 0 && (
              <Link to={`${base}/review`} className="btn-quiet">
                Review
              </Link>
            )}
            {staff && mixes.length > 0 && (
              <Link to={`${base}/renders/new`} className="btn-primary">
                New render
              </Link>
            )}
          </div>
        </div>
        {renders.length === 0 ? <p className="mt-2 text-sm text-ink-soft">No renders of this track yet.</p> : <RenderList renders={renders} base={base} />}
      </section>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.track.title ?? "Track"} · Tidemark` }];

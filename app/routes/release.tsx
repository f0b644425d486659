import { Form, Link, data, useNavigation } from "react-router";
import type { Route } from "./+types/release";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { isStaff, STAFF } from "../lib/roles.ts";
import { REVIEW_STATUS_LABEL } from "../lib/review/state.ts";
import { listSentForRelease, reviewStatuses } from "../models/review-feed.server.ts";
import { listTracks, moveTrack } from "../models/track.server.ts";
import { RELEASE_KIND_LABELS } from "../schemas/release.ts";
import { formatIsrc, trackMoveSchema } from "../schemas/track.ts";
import { PageHeader } from "../components/page-header.tsx";
import { StatusBadge } from "../components/status-badge.tsx";
import { releaseBillingData } from "./release-billing.server.ts";
import { ReleaseBillingSection } from "./release-billing-section.tsx";
import { DataTable } from "../components/data-table.tsx";
import { deleteReference, listReferences } from "../models/reference.server.ts";
import { loadAlbum, setAlbumGap } from "../models/album.server.ts";
import { formatBytes, uploadMaxBytes } from "../lib/upload.server.ts";
import { albumGapSchema, referenceDeleteSchema } from "../schemas/album.ts";
import { getTrack } from "../models/track.server.ts";
import { notFound } from "../lib/http.server.ts";
import { ReferenceSection } from "../components/references/reference-section.tsx";
import { AlbumView } from "../components/album/album-view.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const tracks = await listTracks(release.id);
  const billing = await releaseBillingData(release.id, user, new URL(request.url).searchParams);
  const staff = isStaff(user.role);
  // References and the album section are the studio's own (clients: neither is loaded).
  const references = staff ? await listReferences(release.id) : [];
  const album = staff && tracks.length > 0 ? await loadAlbum(user, release.id) : null;
  return {
    billing,
    release,
    tracks,
    staff,
    reviews: await reviewStatuses(tracks.map((t) => t.id)),
    sent: await listSentForRelease(release.id),
    references,
    album,
    uploadLimit: formatBytes(uploadMaxBytes()),
  };
}

// Staff only: move a track one place up or down in the running order, set
// the album gap before a track, delete a reference track.
export async function action({ request, params }: Route.ActionArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const form = await request.formData();
  const intent = form.get("intent");
  if (intent === "gap") {
    const parsed = albumGapSchema.safeParse({ trackId: form.get("trackId"), gapS: form.get("gapS") });
    if (!parsed.success) return data({ error: parsed.error.issues[0].message, intent }, { status: 400 });
    if (!(await getTrack(release.id, parsed.data.trackId))) throw notFound();
    await setAlbumGap(release.id, parsed.data.trackId, parsed.data.gapS);
    return { error: null, intent };
  }
  if (intent === "delete-reference") {
    const parsed = referenceDeleteSchema.safeParse({ referenceId: form.get("referenceId") });
    if (!parsed.success || !(await deleteReference(release.id, parsed.data.referenceId))) throw notFound();
    return { error: null, intent };
  }
  const parsed = trackMoveSchema.safeParse({ trackId: form.get("trackId"), direction: form.get("direction") });
  if (!parsed.success) return data({ error: parsed.error.issues[0].message, intent: "move" }, { status: 400 });
  const moved = await moveTrack(release.id, parsed.data.trackId, parsed.data.direction);
  if (!moved) return data({ error: "That track cannot move further.", intent: "move" }, { status: 400 });
  return { error: null, intent: "move" };
}

function MoveButton({ trackId, title, direction, disabled }: { trackId: string; title: string; direction: "up" | "down"; disabled: boolean }) {
  return (
    <Form method="post" className="inline">
      <input type="hidden" name="trackId" value={trackId} />
      <button
        type="submit"
        name="direction"
        value={direction}
        disabled={disabled}
        aria-label={`Move “${title}” ${direction}`}
        title={direction === "up" ? "Earlier in the running order" : "Later in the running order"}
        className="rounded px-2 py-1 text-ink-soft hover:bg-paper-deep disabled:opacity-30"
      >
        {direction === "up" ? "↑" : "↓"}
      </button>
    </Form>
  );
}

export default function Release({ loaderData, actionData }: Route.ComponentProps) {
  const { release, tracks, staff, reviews, sent, references, album, uploadLimit } = loaderData;
  const { billing } = loaderData;
  const busy = useNavigation().state !== "idle";
  return (
    <>
      <PageHeader
        eyebrow={
          <>
            {release.clientName} · {RELEASE_KIND_LABELS[release.kind]}
            {release.dueOn && (
              <>
                {" "}
                · due <span className="num">{release.dueOn}</span>
              </>
            )}
          </>
        }
        title={release.title}
        actions={
          staff ? (
            <>
              <Link to={`/releases/${release.id}/tracks/new`} className="btn-primary">
                Add track
              </Link>
              <Link to={`/releases/${release.id}/edit`} className="btn-quiet">
                Edit release
              </Link>
              <Link to={`/releases/${release.id}/room`} className="btn-quiet">
                Review room
              </Link>
            </>
          ) : (
            <Link to={`/releases/${release.id}/room`} className="btn-primary">
              Listen and review
            </Link>
          )
        }
      />
      <div className="mb-5">
        <StatusBadge status={release.status} />
      </div>
      {tracks.length === 0 ? (
        <p className="card px-5 py-8 text-center text-ink-soft">No tracks yet.</p>
      ) : (
        <DataTable
          label="Tracks"
          columns={[{ label: "No.", align: "right", className: "w-14" }, { label: "Title" }, { label: "ISRC" }, { label: "Review" }, staff && { label: "Running order", hiddenLabel: true, className: "w-24" }]}
        >
          {tracks.map((track, index) => (
            <tr key={track.id}>
              <td className="num text-right text-ink-soft">{track.position}</td>
              <td>
                <Link to={`/releases/${release.id}/tracks/${track.id}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                  {track.title}
                </Link>
              </td>
              <td className="num whitespace-nowrap">{track.isrc ? formatIsrc(track.isrc) : <span className="text-ink-faint">—</span>}</td>
              <td className="whitespace-nowrap" data-review-status={reviews[track.id]}>
                {reviews[track.id] ? REVIEW_STATUS_LABEL[reviews[track.id]!] : "—"}
              </td>
              {staff && (
                <td className="whitespace-nowrap text-right">
                  <MoveButton trackId={track.id} title={track.title} direction="up" disabled={busy || index === 0} />
                  <MoveButton trackId={track.id} title={track.title} direction="down" disabled={busy || index === tracks.length - 1} />
                </td>
              )}
            </tr>
          ))}
        </DataTable>
      )}
      <section aria-labelledby="sent-for-review" className="mt-8">
        <h2 id="sent-for-review" className="mb-2 text-lg font-semibold">
          Sent for review
        </h2>
        {sent.length === 0 ? (
          <p className="text-sm text-ink-soft">{staff ? "Nothing sent to the client yet." : "Nothing has been sent to you yet."}</p>
        ) : (
          <ol className="space-y-3">
            {sent.map((item) => (
              <li key={item.id} className="card p-3 text-sm" data-sent-render={item.renderId}>
                <p>
                  <strong>{item.trackTitle}</strong> · {item.renderKind === "print" ? "full track" : "preview"} · sent by {item.senderName ?? "the studio"}{" "}
                  <span className="num text-ink-soft">{new Date(item.sentAt).toISOString().slice(0, 16).replace("T", " ")} UTC</span>
                </p>
                {item.message && <p className="mt-1 whitespace-pre-line">{item.message}</p>}
                <p className="mt-2">
                  <Link to={`/releases/${release.id}/room?track=${item.trackId}&render=${item.renderId}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                    Listen and review
                  </Link>
                </p>
              </li>
            ))}
          </ol>
        )}
      </section>
      {staff && album && (
        <section aria-labelledby="album" className="mt-8">
          <h2 id="album" className="mb-2 text-lg font-semibold">
            Album
          </h2>
          <AlbumView album={album} gapForm={{ busy, error: actionData?.intent === "gap" ? actionData.error : null }} />
        </section>
      )}
      {staff && <ReferenceSection releaseId={release.id} references={references} uploadLimit={uploadLimit} busy={busy} />}
      <ReleaseBillingSection releaseId={release.id} billing={billing} />
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.release.title ?? "Release"} · Tidemark` }];

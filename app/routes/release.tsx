import { Link } from "react-router";
import type { Route } from "./+types/release";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { isStaff } from "../lib/roles.ts";
import { REVIEW_STATUS_LABEL } from "../lib/review/state.ts";
import { listSentForRelease, reviewStatuses } from "../models/review-feed.server.ts";
import { listTracks } from "../models/track.server.ts";
import { RELEASE_KIND_LABELS } from "../schemas/release.ts";
import { formatIsrc } from "../schemas/track.ts";
import { PageHeader } from "../components/page-header.tsx";
import { StatusBadge } from "../components/status-badge.tsx";
import { releaseBillingData } from "./release-billing.server.ts";
import { ReleaseBillingSection } from "./release-billing-section.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const tracks = await listTracks(release.id);
  const billing = await releaseBillingData(release.id, user, new URL(request.url).searchParams);
  return { billing, release, tracks, staff: isStaff(user.role), reviews: await reviewStatuses(tracks.map((t) => t.id)), sent: await listSentForRelease(release.id) };
}

export default function Release({ loaderData }: Route.ComponentProps) {
  const { release, tracks, staff, reviews, sent } = loaderData;
  const { billing } = loaderData;
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
          staff && (
            <>
              <Link to={`/releases/${release.id}/tracks/new`} className="btn-primary">
                Add track
              </Link>
              <Link to={`/releases/${release.id}/edit`} className="btn-quiet">
                Edit release
              </Link>
            </>
          )
        }
      />
      <div className="mb-5">
        <StatusBadge status={release.status} />
      </div>
      {tracks.length === 0 ? (
        <p className="card px-5 py-8 text-center text-ink-soft">No tracks yet.</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="data-table" aria-label="Tracks">
            <thead>
              <tr>
                <th scope="col" className="w-14 text-right">
                  No.
                </th>
                <th scope="col">Title</th>
                <th scope="col">ISRC</th>
                <th scope="col">Review</th>
              </tr>
            </thead>
            <tbody>
              {tracks.map((track) => (
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
                </tr>
              ))}
            </tbody>
          </table>
        </div>
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
                  <Link to={`/releases/${release.id}/tracks/${item.trackId}/compare?a=${item.renderId}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                    Listen and review
                  </Link>
                </p>
              </li>
            ))}
          </ol>
        )}
      </section>
      <ReleaseBillingSection releaseId={release.id} billing={billing} />
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.release.title ?? "Release"} · Tidemark` }];

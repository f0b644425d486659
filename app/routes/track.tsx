import { Link } from "react-router";
import type { Route } from "./+types/track";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { isStaff } from "../lib/roles.ts";
import { getTrack } from "../models/track.server.ts";
import { formatIsrc } from "../schemas/track.ts";
import { PageHeader } from "../components/page-header.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  return { release: { id: release.id, title: release.title, clientName: release.clientName }, track, staff: isStaff(user.role) };
}

export default function Track({ loaderData }: Route.ComponentProps) {
  const { release, track, staff } = loaderData;
  return (
    <>
      <p className="mb-2 text-sm">
        <Link to={`/releases/${release.id}`} className="text-accent-deep underline-offset-4 hover:underline">
          ← {release.title}
        </Link>
      </p>
      <PageHeader
        eyebrow={
          <>
            {release.clientName} · track <span className="num">{track.position}</span>
          </>
        }
        title={track.title}
        actions={
          staff && (
            <Link to={`/releases/${release.id}/tracks/${track.id}/edit`} className="btn-quiet">
              Edit track
            </Link>
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
      {/* Mixes, renders and reviews of this track join this page in later issues. */}
      <section aria-labelledby="mixes" className="mt-8">
        <h2 id="mixes" className="text-lg font-semibold">
          Mixes
        </h2>
        <p className="mt-2 text-sm text-ink-soft">No mixes uploaded for this track yet.</p>
      </section>
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data?.track.title ?? "Track"} · Tidemark` }];

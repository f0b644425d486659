import { Link } from "react-router";
import type { Route } from "./+types/dashboard";
import { requireUser } from "../lib/auth.server.ts";
import { isStaff } from "../lib/roles.ts";
import { REVIEW_STATUS_LABEL } from "../lib/review/state.ts";
import { listReleasesForUser } from "../models/release.server.ts";
import { openReviews } from "../models/review-feed.server.ts";
import { RELEASE_STATUSES, RELEASE_STATUS_LABELS } from "../schemas/release.ts";
import { PageHeader } from "../components/page-header.tsx";
import { ReleaseTable } from "../components/release-table.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const releases = await listReleasesForUser(user);
  const counts = Object.fromEntries(RELEASE_STATUSES.map((status) => [status, releases.filter((r) => r.status === status).length]));
  return {
    staff: isStaff(user.role),
    heading: isStaff(user.role) ? user.studioName : (user.clientName ?? "Your releases"),
    releases,
    counts,
    reviews: await openReviews(releases.map((r) => r.id)),
  };
}

export default function Dashboard({ loaderData }: Route.ComponentProps) {
  const { staff, heading, releases, counts, reviews } = loaderData;
  return (
    <>
      <PageHeader
        eyebrow={staff ? "Studio dashboard" : "Your releases"}
        title={heading}
        actions={
          staff && (
            <Link to="/releases/new" className="btn-primary">
              New release
            </Link>
          )
        }
      />
      {staff && (
        <dl className="mb-6 grid grid-cols-2 gap-3 sm:grid-cols-5">
          {RELEASE_STATUSES.map((status) => (
            <div key={status} className="card px-4 py-3">
              <dt className="text-xs tracking-wide text-ink-soft uppercase">{RELEASE_STATUS_LABELS[status]}</dt>
              <dd className="num mt-1 text-2xl">{counts[status]}</dd>
            </div>
          ))}
        </dl>
      )}
      {reviews.length > 0 && (
        <section aria-labelledby="reviews" className="mb-6">
          <h2 id="reviews" className="mb-2 text-lg font-semibold">
            Reviews
          </h2>
          <ul className="card divide-y divide-rule">
            {reviews.map((r) => (
              <li key={r.trackId} className="flex flex-wrap items-baseline justify-between gap-2 px-4 py-2 text-sm">
                <Link to={`/releases/${r.releaseId}/room?track=${r.trackId}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                  {r.releaseTitle} · {r.trackTitle}
                </Link>
                <span data-review-status={r.status}>{REVIEW_STATUS_LABEL[r.status]}</span>
              </li>
            ))}
          </ul>
        </section>
      )}
      <ReleaseTable releases={releases} showClient={staff} />
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Dashboard · Tidemark" }];

import { Link } from "react-router";
import type { Route } from "./+types/dashboard";
import { requireUser } from "../lib/auth.server.ts";
import { isStaff } from "../lib/roles.ts";
import { listReleasesForUser } from "../models/release.server.ts";
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
  };
}

export default function Dashboard({ loaderData }: Route.ComponentProps) {
  const { staff, heading, releases, counts } = loaderData;
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
      <ReleaseTable releases={releases} showClient={staff} />
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Dashboard · Tidemark" }];

import { Form, Link } from "react-router";
import type { Route } from "./+types/releases";
import { requireRole } from "../lib/auth.server.ts";
import { STAFF } from "../lib/roles.ts";
import { listReleasesForUser } from "../models/release.server.ts";
import { RELEASE_STATUSES, RELEASE_STATUS_LABELS, type ReleaseStatus } from "../schemas/release.ts";
import { PageHeader } from "../components/page-header.tsx";
import { ReleaseTable } from "../components/release-table.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, STAFF);
  const requested = new URL(request.url).searchParams.get("status");
  const status = RELEASE_STATUSES.find((s) => s === requested) as ReleaseStatus | undefined;
  return { status: status ?? "", releases: await listReleasesForUser(user, { status }) };
}

export default function Releases({ loaderData }: Route.ComponentProps) {
  return (
    <>
      <PageHeader
        title="Releases"
        actions={
          <Link to="/releases/new" className="btn-primary">
            New release
          </Link>
        }
      />
      <Form method="get" className="mb-4 flex flex-wrap items-end gap-2">
        <label className="text-sm">
          <span className="mb-1 block font-medium">Status</span>
          <select name="status" defaultValue={loaderData.status} className="field-input w-48">
            <option value="">All</option>
            {RELEASE_STATUSES.map((status) => (
              <option key={status} value={status}>
                {RELEASE_STATUS_LABELS[status]}
              </option>
            ))}
          </select>
        </label>
        <button type="submit" className="btn-quiet">
          Show
        </button>
      </Form>
      <ReleaseTable releases={loaderData.releases} showClient />
    </>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Releases · Tidemark" }];

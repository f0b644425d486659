// The releases table: a table on wide screens, a stack of cards on a phone.
import { Link } from "react-router";
import type { ReleaseRow } from "../models/release.server.ts";
import { RELEASE_KIND_LABELS } from "../schemas/release.ts";
import { StatusBadge } from "./status-badge.tsx";
import { DataTable } from "./data-table.tsx";

/** What a row shows: a release as the releases query reads it. */
export type ReleaseListItem = Omit<ReleaseRow, "updatedAt">;

function tracksLabel(count: number) {
  return `${count} ${count === 1 ? "track" : "tracks"}`;
}

export function ReleaseTable({ releases, showClient }: { releases: ReleaseListItem[]; showClient: boolean }) {
  if (releases.length === 0) {
    return <p className="card px-5 py-8 text-center text-ink-soft">No releases yet.</p>;
  }
  return (
    <>
      <DataTable
        label="Releases"
        frameClassName="hidden md:block"
        columns={[{ label: "Release" }, showClient && { label: "Client" }, { label: "Kind" }, { label: "Tracks", align: "right" }, { label: "Due" }, { label: "Status" }]}
      >
        {releases.map((release) => (
          <tr key={release.id} className="hover:bg-paper/60">
            <td>
              <Link to={`/releases/${release.id}`} className="font-medium text-accent-deep underline-offset-4 hover:underline">
                {release.title}
              </Link>
            </td>
            {showClient && <td>{release.clientName}</td>}
            <td>{RELEASE_KIND_LABELS[release.kind]}</td>
            <td className="num text-right">{tracksLabel(release.trackCount)}</td>
            <td className="num">{release.dueOn ?? "—"}</td>
            <td>
              <StatusBadge status={release.status} />
            </td>
          </tr>
        ))}
      </DataTable>
      <ul className="space-y-3 md:hidden" aria-label="Releases">
        {releases.map((release) => (
          <li key={release.id} className="card px-4 py-3">
            <div className="flex items-start justify-between gap-3">
              <Link to={`/releases/${release.id}`} className="font-medium text-accent-deep">
                {release.title}
              </Link>
              <StatusBadge status={release.status} />
            </div>
            <p className="mt-1 text-sm text-ink-soft">
              {showClient && <>{release.clientName} · </>}
              {RELEASE_KIND_LABELS[release.kind]} · <span className="num">{tracksLabel(release.trackCount)}</span>
              {release.dueOn && (
                <>
                  {" "}
                  · due <span className="num">{release.dueOn}</span>
                </>
              )}
            </p>
          </li>
        ))}
      </ul>
    </>
  );
}

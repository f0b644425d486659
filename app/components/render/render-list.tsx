// The renders of a track: what was rendered from what, and how far it got.
import { Link } from "react-router";
import type { RenderListItem } from "../../lib/render-views.server.ts";
import { RenderProgress } from "./progress-bar.tsx";
import { fmt } from "./format.ts";
import { DataTable } from "../data-table.tsx";

/** What a row shows: a render as the track's render list reads it. */
export type RenderListRow = Omit<RenderListItem, "queuedAt" | "error">;

export function RenderList({ renders, base }: { renders: RenderListRow[]; base: string }) {
  return (
    <DataTable label="Renders" frame="bare" frameClassName="mt-3" className="w-full text-sm" columns={[{ label: "Kind" }, { label: "Mix" }, { label: "Chain" }, { label: "Target" }, { label: "State" }]}>
      {renders.map((r) => (
        <tr key={r.id}>
          <td>
            <Link to={`${base}/renders/${r.id}`} className="text-accent-deep underline-offset-4 hover:underline">
              {r.kind === "print" ? "Print" : "Preview"}
            </Link>
            <span className="num block text-xs text-ink-faint">
              {r.kind === "preview" ? (r.region ? `${r.region.startS.toFixed(1)}–${r.region.endS.toFixed(1)} s` : "loudest 30 s") : "whole mix"}
            </span>
          </td>
          <td className="num">v{r.mixVersion}</td>
          <td className="whitespace-nowrap">
            {r.chainName} <span className="num text-ink-faint">rev {r.chainRevision}</span>
          </td>
          <td className="num whitespace-nowrap">{r.targetLufs == null ? "—" : fmt(r.targetLufs, "LUFS")}</td>
          <td>
            <RenderProgress state={r.state} progress={r.progress} />
          </td>
        </tr>
      ))}
    </DataTable>
  );
}

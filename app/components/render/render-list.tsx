// The renders of a track, told apart: what was rendered from what (mix
// version, chain by name and revision, target), when it finished, what came
// out (integrated loudness, true peak), how far it got, and marks for the
// ones sent to the client, approved by them, or delivered from.
import { Link } from "react-router";
import type { RenderListItem } from "../../lib/render-views.server.ts";
import { RenderProgress } from "./progress-bar.tsx";
import { fmt } from "./format.ts";
import { DataTable } from "../data-table.tsx";

/** What a row shows: a render as the track's render list reads it. */
export type RenderListRow = Omit<RenderListItem, "queuedAt" | "error">;

const when = (iso: string | null) => (iso ? `${iso.slice(0, 10)} ${iso.slice(11, 16)} UTC` : "—");

export function RenderList({ renders, base }: { renders: RenderListRow[]; base: string }) {
  return (
    <DataTable
      label="Renders"
      frame="bare"
      frameClassName="mt-3"
      className="w-full text-sm"
      columns={[{ label: "Kind" }, { label: "Finished" }, { label: "Mix" }, { label: "Chain" }, { label: "Target" }, { label: "Output" }, { label: "Marks" }, { label: "State" }]}
    >
      {renders.map((r) => (
        <tr key={r.id} data-render={r.id}>
          <td>
            <Link to={`${base}/renders/${r.id}`} className="text-accent-deep underline-offset-4 hover:underline">
              {r.kind === "print" ? "Print" : "Preview"}
            </Link>
            <span className="num block text-xs text-ink-faint">
              {r.kind === "preview" ? (r.region ? `${r.region.startS.toFixed(1)}–${r.region.endS.toFixed(1)} s` : "loudest 30 s") : "whole mix"}
            </span>
          </td>
          <td className="num whitespace-nowrap text-xs">{when(r.finishedAt)}</td>
          <td className="num">v{r.mixVersion}</td>
          <td className="whitespace-nowrap">
            {r.chainName} <span className="num text-ink-faint">rev {r.chainRevision}</span>
          </td>
          <td className="num whitespace-nowrap">{r.targetLufs == null ? "—" : fmt(r.targetLufs, "LUFS")}</td>
          <td className="num whitespace-nowrap text-xs">
            {r.outputLufs == null ? "—" : fmt(r.outputLufs, "LUFS")}
            {r.outputTruePeakDbtp != null && <span className="block text-ink-faint">{fmt(r.outputTruePeakDbtp, "dBTP")}</span>}
          </td>
          <td className="text-xs" data-marks>
            {[r.sent && "sent", r.approved && "approved", r.inDelivery && "in a delivery"].filter(Boolean).join(" · ") || "—"}
          </td>
          <td>
            <RenderProgress state={r.state} progress={r.progress} />
          </td>
        </tr>
      ))}
    </DataTable>
  );
}

// The versions of a track's mix with the figures of their analyses. A table
// that scrolls within itself on a phone, so the page never scrolls sideways.
import { fmt, fmtDuration, STATE_LABEL } from "../render/format.ts";
import { DataTable } from "../data-table.tsx";

export type MixVersionRow = {
  id: string;
  version: number;
  originalName: string;
  durationSeconds: number;
  format: string;
  analysisState: string;
  analysisError: string | null;
  integratedLufs: number | null;
  truePeakDbtp: number | null;
};

export function MixVersionsTable({ mixes, downloadBase }: { mixes: MixVersionRow[]; downloadBase?: string }) {
  return (
    <DataTable
      label="Mix versions"
      frame="bare"
      frameClassName="mt-3"
      className="w-full text-sm"
      columns={[{ label: "Version" }, { label: "File" }, { label: "Loudness" }, { label: "True peak" }, { label: "Duration" }, { label: "Format" }, { label: "Analysis" }, !!downloadBase && { label: "Download", hiddenLabel: true }]}
    >
      {mixes.map((m) => (
        <tr key={m.id} data-mix-version={m.version}>
          <td className="num">v{m.version}</td>
          <td className="max-w-48 truncate" title={m.originalName}>{m.originalName}</td>
          <td className="num whitespace-nowrap">{fmt(m.integratedLufs, "LUFS")}</td>
          <td className="num whitespace-nowrap">{fmt(m.truePeakDbtp, "dBTP")}</td>
          <td className="num">{fmtDuration(m.durationSeconds)}</td>
          <td className="whitespace-nowrap">{m.format}</td>
          <td>
            <span className={m.analysisState === "failed" ? "text-danger" : ""} title={m.analysisError ?? undefined}>
              {m.analysisState === "running" || m.analysisState === "pending" ? `${STATE_LABEL[m.analysisState]}…` : STATE_LABEL[m.analysisState]}
            </span>
          </td>
          {downloadBase && (
            <td>
              <a href={`${downloadBase}/${m.id}/download`} className="text-accent-deep underline-offset-4 hover:underline" download>
                WAV
              </a>
            </td>
          )}
        </tr>
      ))}
    </DataTable>
  );
}

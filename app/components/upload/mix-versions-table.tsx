// The versions of a track's mix with the figures of their analyses. A table
// that scrolls within itself on a phone, so the page never scrolls sideways.
import { fmt, fmtDuration, STATE_LABEL } from "../render/format.ts";

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
    <div className="relative mt-3 max-w-full overflow-x-auto">
      <table className="data-table w-full text-sm" aria-label="Mix versions">
        <thead>
          <tr>
            <th scope="col">Version</th>
            <th scope="col">File</th>
            <th scope="col">Loudness</th>
            <th scope="col">True peak</th>
            <th scope="col">Duration</th>
            <th scope="col">Format</th>
            <th scope="col">Analysis</th>
            {downloadBase && <th scope="col"><span className="sr-only">Download</span></th>}
          </tr>
        </thead>
        <tbody>
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
        </tbody>
      </table>
    </div>
  );
}

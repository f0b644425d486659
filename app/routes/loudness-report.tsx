// /releases/:releaseId/loudness-report — the release's loudness report as a
// page: every track × format with integrated loudness, loudness range, true
// peak, PLR and how far each of the studio's reference levels would turn it
// down; with the CSV download and a layout for printing.
import { Link } from "react-router";
import type { Route } from "./+types/loudness-report";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { albumLoudnessReport } from "../models/album-report.server.ts";
import { PageHeader } from "../components/page-header.tsx";
import { DataTable } from "../components/data-table.tsx";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  return { release: { id: release.id, title: release.title, clientName: release.clientName }, report: await albumLoudnessReport(user, release.id) };
}

const fixed = (v: number | null, decimals: number) => (v === null ? "—" : v.toFixed(decimals).replace("-", "−"));

// Printing drops the navigation and the buttons and keeps the table on paper width.
const PRINT_CSS = `@media print {
  body header:has(nav[aria-label="Main"]), nav, .no-print { display: none !important; }
  main { max-width: none !important; padding: 0 !important; }
  .report-table { font-size: 9pt; }
  .report-table th, .report-table td { padding: 2pt 4pt; }
  .card { box-shadow: none !important; border: 0 !important; }
  body { background: #fff !important; }
}`;

export default function LoudnessReport({ loaderData }: Route.ComponentProps) {
  const { release, report } = loaderData;
  return (
    <>
      <style>{PRINT_CSS}</style>
      <PageHeader
        eyebrow={
          <Link to={`/releases/${release.id}`}>
            {release.clientName} · {release.title}
          </Link>
        }
        title="Loudness report"
        actions={
          <span className="no-print flex flex-wrap gap-2">
            <a href={`/releases/${release.id}/loudness-report.csv`} className="btn-quiet" download>
              Download CSV
            </a>
            <button type="button" className="btn-quiet" onClick={() => window.print()}>
              Print
            </button>
          </span>
        }
      />
      <p className="mb-4 max-w-3xl text-sm text-ink-soft">
        Measured on the delivered files (ITU-R BS.1770-4 loudness, EBU Tech 3342 loudness range, true peak). PLR is true peak minus integrated loudness. The turn-down columns show how far a
        player that normalises to each reference level would lower the track; quieter tracks are assumed not to be raised. The album row measures the current masters
        played in order with their gaps, gated across the whole album, so a player's album mode keeps the tracks' balance.
      </p>
      {report.rows.length === 0 ? (
        <p className="card px-5 py-8 text-center text-ink-soft">No tracks yet.</p>
      ) : (
        <DataTable
          label="Loudness report"
          className="report-table"
          columns={[
            { label: "Track" },
            { label: "Format" },
            { label: "Integrated (LUFS)", align: "right" },
            { label: "LRA (LU)", align: "right" },
            { label: "True peak (dBTP)", align: "right" },
            { label: "Reconstructed peak (dBFS)", align: "right" },
            { label: "PLR (dB)", align: "right" },
            ...report.references.map((r) => ({
              label: (
                <>
                  Turn-down at {r.name} <span className="num">{fixed(r.lufs, 0)}</span> LUFS (dB)
                </>
              ),
              align: "right" as const,
            })),
            { label: "Warnings" },
          ]}
        >
          {report.rows.map((row) => (
            <tr key={`${row.position} ${row.format}`}>
              <td>
                <span className="num text-ink-soft">{row.position}.</span> {row.title}
              </td>
              <td>{row.format}</td>
              <td className="num text-right">{fixed(row.integratedLufs, 1)}</td>
              <td className="num text-right">{fixed(row.loudnessRangeLu, 1)}</td>
              <td className="num text-right">{fixed(row.truePeakDbtp, 2)}</td>
              <td className="num text-right">{fixed(row.reconstructedPeakDb, 2)}</td>
              <td className="num text-right">{fixed(row.plrDb, 1)}</td>
              {row.turnDownDb.map((v, i) => (
                <td key={report.references[i]!.name} className="num text-right">
                  {fixed(v, 1)}
                </td>
              ))}
              <td className="text-sm">{row.warnings.length > 0 ? row.warnings.join("; ") : "none"}</td>
            </tr>
          ))}
          {report.album && (
            <tr data-testid="album-row" className="border-t-2 border-rule font-medium">
              <td>Album ({report.album.trackCount} tracks, masters with gaps)</td>
              <td>album</td>
              <td className="num text-right">{fixed(report.album.integratedLufs, 1)}</td>
              <td className="num text-right">{fixed(report.album.loudnessRangeLu, 1)}</td>
              <td className="num text-right">{fixed(report.album.truePeakDbtp, 2)}</td>
              <td className="num text-right">{fixed(report.album.plrDb, 1)}</td>
              {report.album.turnDownDb.map((v, i) => (
                <td key={report.references[i]!.name} className="num text-right">
                  {fixed(v, 1)}
                </td>
              ))}
              <td className="text-sm">{report.album.note ?? "none"}</td>
            </tr>
          )}
        </DataTable>
      )}
    </>
  );
}

export const meta: Route.MetaFunction = ({ data }) => [{ title: `Loudness report · ${data?.release.title ?? "Release"} · Tidemark` }];

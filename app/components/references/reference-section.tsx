// The release page's reference tracks (staff only): upload with progress,
// each reference's analysis, and delete (the file goes with it). Comparing
// happens on a track's compare page, where references are offered as sources.
import { Form } from "react-router";
import type { ReferenceTrack } from "../../models/reference.server.ts";
import { DataTable } from "../data-table.tsx";
import { fmt, fmtDuration } from "../render/format.ts";
import { MixUploadForm } from "../upload/mix-upload-form.tsx";

type Figures = { integratedLufs?: number | null; truePeakDbtp?: number | null; loudnessRangeLu?: number | null };

const STATE: Record<string, string> = { pending: "waiting to be analysed", running: "analysing…", failed: "analysis failed" };

export function ReferenceSection({
  releaseId,
  references,
  uploadLimit,
  busy,
}: {
  releaseId: string;
  references: Array<Pick<ReferenceTrack, "id" | "originalName" | "durationSeconds" | "sampleRateHz" | "channels" | "bitDepth" | "analysisState" | "analysisError"> & { analysis: unknown }>;
  uploadLimit: string;
  busy: boolean;
}) {
  return (
    <section aria-labelledby="references" className="mt-8" data-testid="references">
      <h2 id="references" className="mb-1 text-lg font-semibold">
        References
      </h2>
      <p className="mb-3 text-sm text-ink-soft">
        Records to compare the masters against, at matched loudness, on each track's compare page. Only the studio sees them: they are never sent or delivered.
      </p>
      {references.length > 0 && (
        <DataTable
          label="References"
          columns={[{ label: "File" }, { label: "Length", align: "right" }, { label: "Format" }, { label: "Integrated", align: "right" }, { label: "Range", align: "right" }, { label: "True peak", align: "right" }, { label: "Delete", hiddenLabel: true }]}
        >
          {references.map((r) => {
            const a = (r.analysis ?? {}) as Figures;
            const done = r.analysisState === "done";
            return (
              <tr key={r.id} data-reference={r.id} data-analysis-state={r.analysisState}>
                <td className="max-w-64 truncate" title={r.originalName}>
                  {r.originalName}
                  {!done && <span className={`block text-xs ${r.analysisState === "failed" ? "text-danger" : "text-ink-soft"}`}>{r.analysisState === "failed" ? `${STATE.failed}: ${r.analysisError ?? ""}` : STATE[r.analysisState]}</span>}
                </td>
                <td className="num text-right">{fmtDuration(r.durationSeconds)}</td>
                <td className="num whitespace-nowrap">
                  {(r.sampleRateHz / 1000).toLocaleString("en")} kHz · {r.bitDepth}-bit · {r.channels === 1 ? "mono" : r.channels === 2 ? "stereo" : `${r.channels} ch`}
                </td>
                <td className="num text-right whitespace-nowrap">{done ? fmt(a.integratedLufs, "LUFS") : "…"}</td>
                <td className="num text-right whitespace-nowrap">{done ? fmt(a.loudnessRangeLu, "LU") : "…"}</td>
                <td className="num text-right whitespace-nowrap">{done ? fmt(a.truePeakDbtp, "dBTP") : "…"}</td>
                <td className="text-right">
                  <Form
                    method="post"
                    onSubmit={(e) => {
                      if (!window.confirm(`Delete the reference “${r.originalName}” and its file?`)) e.preventDefault();
                    }}
                  >
                    <input type="hidden" name="intent" value="delete-reference" />
                    <input type="hidden" name="referenceId" value={r.id} />
                    <button type="submit" className="btn-quiet text-sm" disabled={busy} aria-label={`Delete reference ${r.originalName}`}>
                      Delete
                    </button>
                  </Form>
                </td>
              </tr>
            );
          })}
        </DataTable>
      )}
      <MixUploadForm
        uploadUrl={`/releases/${releaseId}/references`}
        maxBytesLabel={uploadLimit}
        label="Upload reference tracks (WAV)"
        hint={`Choose files or drop them here. Up to ${uploadLimit} a file; each is analysed on arrival.`}
        inputId="reference-files"
      />
    </section>
  );
}

// The loudness report of a release: one row per track and delivery format,
// from the analysis of the delivered file. Measures after ITU-R BS.1770-4 /
// EBU R 128: integrated loudness (LUFS), loudness range (LU, EBU Tech 3342),
// true peak (dBTP), and the reconstructed peak (8× grid, dBFS: what a
// band-limited reconstruction of the file reaches between samples). Derived here:
//   PLR (peak-to-loudness ratio, dB) = true peak − integrated loudness
//   turn-down at a reference (dB)     = max(0, integrated − reference)
// A track with no finished delivery in a format gets a row without numbers.
import { toCsv, type CsvCell } from "./csv.ts";
import { turnDownDb, type NormalisationReference } from "./normalisation.ts";

export interface DeliveryMeasures {
  integratedLufs: number;
  loudnessRangeLu: number;
  truePeakDbtp: number;
  /** Absent on deliveries made before it was measured. */
  reconstructedPeakDb?: number;
}

export interface ReportInput {
  tracks: readonly { trackId: string; position: number; title: string; isrc: string | null }[];
  formats: readonly { formatId: string; name: string }[];
  /** Finished deliveries by track and format. */
  deliveries: readonly { trackId: string; formatId: string; analysis: DeliveryMeasures; warnings: readonly string[] }[];
  references: readonly NormalisationReference[];
}

export interface ReportRow {
  position: number;
  title: string;
  isrc: string | null;
  format: string;
  delivered: boolean;
  /** null where the delivery is missing or the file is silent (−∞). */
  integratedLufs: number | null;
  loudnessRangeLu: number | null;
  truePeakDbtp: number | null;
  reconstructedPeakDb: number | null;
  plrDb: number | null;
  /** One per reference, in the order of the references; null where there is no loudness. */
  turnDownDb: (number | null)[];
  warnings: string[];
}

export interface LoudnessReport {
  references: NormalisationReference[];
  rows: ReportRow[];
  /** The album as a whole: its masters in running order with their gaps (absent when not measured). */
  album?: AlbumReportRow | null;
}

/**
 * The album row: integrated loudness and loudness range of the masters played
 * in order with their gaps (BS.1770-4 gating across the whole album, see
 * dsp/album.ts), the highest true peak of any master, PLR from those two.
 */
export interface AlbumReportRow {
  trackCount: number;
  durationS: number;
  integratedLufs: number | null;
  loudnessRangeLu: number | null;
  truePeakDbtp: number | null;
  plrDb: number | null;
  turnDownDb: (number | null)[];
  note: string | null;
}

export function withAlbumRow(
  report: LoudnessReport,
  album: { trackCount: number; durationS: number; integratedLufs: number; loudnessRangeLu: number; truePeakDbtp: number | null; note?: string | null } | null,
): LoudnessReport {
  if (!album) return { ...report, album: null };
  const integrated = finite(album.integratedLufs);
  const truePeak = finite(album.truePeakDbtp ?? undefined);
  return {
    ...report,
    album: {
      trackCount: album.trackCount,
      durationS: album.durationS,
      integratedLufs: integrated,
      loudnessRangeLu: finite(album.loudnessRangeLu),
      truePeakDbtp: truePeak,
      plrDb: integrated !== null && truePeak !== null ? truePeak - integrated : null,
      turnDownDb: report.references.map((r) => (integrated === null ? null : turnDownDb(integrated, r.lufs))),
      note: album.note ?? null,
    },
  };
}

const finite = (v: number | undefined): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

export function buildLoudnessReport(input: ReportInput): LoudnessReport {
  const byKey = new Map(input.deliveries.map((d) => [`${d.trackId} ${d.formatId}`, d]));
  const rows: ReportRow[] = [];
  for (const track of [...input.tracks].sort((a, b) => a.position - b.position)) {
    for (const format of input.formats) {
      const d = byKey.get(`${track.trackId} ${format.formatId}`);
      const integrated = finite(d?.analysis.integratedLufs);
      const truePeak = finite(d?.analysis.truePeakDbtp);
      rows.push({
        position: track.position,
        title: track.title,
        isrc: track.isrc,
        format: format.name,
        delivered: d !== undefined,
        integratedLufs: integrated,
        loudnessRangeLu: finite(d?.analysis.loudnessRangeLu),
        truePeakDbtp: truePeak,
        reconstructedPeakDb: finite(d?.analysis.reconstructedPeakDb),
        plrDb: integrated !== null && truePeak !== null ? truePeak - integrated : null,
        turnDownDb: input.references.map((r) => (integrated === null ? null : turnDownDb(integrated, r.lufs))),
        warnings: d ? [...d.warnings] : ["not delivered"],
      });
    }
  }
  return { references: input.references.map((r) => ({ ...r })), rows };
}

/** Fixed decimals, as a number (so the CSV holds numbers, not text). */
const round = (v: number | null, decimals: number): number | null => (v === null ? null : Number(v.toFixed(decimals)) + 0);

export function loudnessReportCsv(report: LoudnessReport): string {
  const header: CsvCell[] = [
    "Track",
    "Title",
    "ISRC",
    "Format",
    "Integrated (LUFS)",
    "Loudness range (LU)",
    "True peak (dBTP)",
    "Reconstructed peak (dBFS)",
    "PLR (dB)",
    ...report.references.map((r) => `Turn-down at ${r.name} ${r.lufs} LUFS (dB)`),
    "Warnings",
  ];
  const rows = report.rows.map((r): CsvCell[] => [
    r.position,
    r.title,
    r.isrc ?? "",
    r.format,
    round(r.integratedLufs, 1),
    round(r.loudnessRangeLu, 1),
    round(r.truePeakDbtp, 2),
    round(r.reconstructedPeakDb, 2),
    round(r.plrDb, 1),
    ...r.turnDownDb.map((v) => round(v, 1)),
    r.warnings.join("; "),
  ]);
  const a = report.album;
  if (a) {
    rows.push([
      "Album",
      `${a.trackCount} tracks, masters with gaps, ${Math.floor(a.durationS / 60)}:${String(Math.round(a.durationS % 60)).padStart(2, "0")}`,
      "",
      "album",
      round(a.integratedLufs, 1),
      round(a.loudnessRangeLu, 1),
      round(a.truePeakDbtp, 2),
      "", // the reconstructed peak is measured per file, not across the album
      round(a.plrDb, 1),
      ...a.turnDownDb.map((v) => round(v, 1)),
      a.note ?? "",
    ]);
  }
  return toCsv([header, ...rows]);
}

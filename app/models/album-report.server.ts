// The loudness report with its album row: the deliveries' rows
// (delivery.server.ts) and the album measured from the current masters this
// viewer may hear, with the release's gaps (album.server.ts).
import type { LoudnessReport } from "../lib/delivery/loudness-report.ts";
import { withAlbumRow } from "../lib/delivery/loudness-report.ts";
import { loadAlbum } from "./album.server.ts";
import { loudnessReport } from "./delivery.server.ts";
import type { Viewer } from "./review.server.ts";

export async function albumLoudnessReport(viewer: Viewer, releaseId: string): Promise<LoudnessReport> {
  const report = await loudnessReport(releaseId);
  const album = await loadAlbum(viewer, releaseId);
  if (!album.loudness) return withAlbumRow(report, null);
  return withAlbumRow(report, {
    trackCount: album.tracks.filter((t) => t.master).length,
    durationS: album.loudness.durationS,
    integratedLufs: album.loudness.integratedLufs,
    loudnessRangeLu: album.loudness.loudnessRangeLu,
    truePeakDbtp: album.loudness.truePeakDbtp,
    note: album.loudnessNote,
  });
}

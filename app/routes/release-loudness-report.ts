// GET /releases/:releaseId/loudness-report.csv — the release's loudness
// report (every track × format, with turn-down at the studio's reference
// levels, and the album row) for anyone who may see the release.
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { safeName } from "../lib/delivery/file-names.ts";
import { loudnessReportCsv } from "../lib/delivery/loudness-report.ts";
import { albumLoudnessReport } from "../models/album-report.server.ts";

export async function loader({ request, params }: { request: Request; params: { releaseId?: string } }) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const csv = loudnessReportCsv(await albumLoudnessReport(user, release.id));
  const name = `${safeName(release.title, "Release")} loudness report.csv`;
  const asciiName = name.replace(/[^\x20-\x7e]/g, "_").replace(/["\\]/g, "_");
  return new Response(csv, {
    headers: {
      "Content-Type": "text/csv; charset=utf-8; header=present",
      "Content-Disposition": `attachment; filename="${asciiName}"; filename*=UTF-8''${encodeURIComponent(name)}`,
      "Cache-Control": "private, no-store",
    },
  });
}

// GET /releases/:releaseId/package.zip — the release's delivered files and
// loudness report as one zip, streamed. Staff may always download; a client
// only once the release's invoice is paid (app/lib/render-visibility.server.ts).
import { Readable } from "node:stream";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { safeName } from "../lib/delivery/file-names.ts";
import { finalsLocked, finalsOpenFor } from "../lib/render-visibility.server.ts";
import { releasePackage } from "../models/delivery.server.ts";

export async function loader({ request, params }: { request: Request; params: { releaseId?: string } }) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  if (!(await finalsOpenFor(user, release.id))) return finalsLocked();
  const { stream, files } = await releasePackage(release.id);
  if (files.length === 0) {
    stream.destroy();
    return new Response("Nothing has been delivered for this release yet.", { status: 404, headers: { "Content-Type": "text/plain; charset=utf-8" } });
  }
  // A download that is abandoned stops reading from storage.
  request.signal.addEventListener("abort", () => stream.destroy(), { once: true });
  const name = `${safeName(release.title, "Release")}.zip`;
  const asciiName = name.replace(/[^\x20-\x7e]/g, "_").replace(/["\\]/g, "_");
  return new Response(Readable.toWeb(stream) as ReadableStream<Uint8Array>, {
    headers: {
      "Content-Type": "application/zip",
      "Content-Disposition": `attachment; filename="${asciiName}"; filename*=UTF-8''${encodeURIComponent(name)}`,
      "Cache-Control": "private, no-store",
    },
  });
}

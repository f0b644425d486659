// GET …/mixes/:mixId/download: a mix version's original file, for staff of
// the studio (clients get previews and prints, not the originals).
import type { Route } from "./+types/download.mix";
import { STAFF } from "../lib/roles.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { requireTrackMix } from "../lib/render-access.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release, track, mix } = await requireTrackMix(request, params, STAFF);
  const name = downloadName([release.title, `${String(track.position).padStart(2, "0")} ${track.title}`, `mix v${mix.version}`], "wav");
  return serveStored(request, mix.storageKey, { fileName: name, contentType: "audio/wav" });
}

// GET /api/mixes/:mixId/audio: a mix version's original WAV, with byte ranges (staff).
import type { Route } from "./+types/api.mix-audio";
import { handleApi, requireApiUser } from "../lib/api.server.ts";
import { mixFor } from "../lib/api-access.server.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { STAFF } from "../lib/roles.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request, STAFF);
    const { release, track, mix } = await mixFor(user, params.mixId);
    const name = downloadName([release.title, `${String(track.position).padStart(2, "0")} ${track.title}`, `mix v${mix.version}`], "wav");
    return serveStored(request, mix.storageKey, { fileName: name, contentType: "audio/wav" });
  });
}

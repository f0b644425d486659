// GET /api/tracks/:trackId/mixes: the track's mix versions, newest first (staff).
// POST: upload a mix as the raw request body (a WAV file; its name in
// X-File-Name or ?name=), which becomes the track's next version (staff).
import type { Route } from "./+types/api.track-mixes";
import { apiError, handleApi, json, methodNotAllowed, requireApiUser } from "../lib/api.server.ts";
import { trackFor } from "../lib/api-access.server.ts";
import { mixView } from "../lib/api-views.server.ts";
import { STAFF } from "../lib/roles.ts";
import { receiveMixUpload, UploadError } from "../lib/upload.server.ts";
import { listMixVersions } from "../models/mix.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request, STAFF);
    const { track } = await trackFor(user, params.trackId);
    return json({ mixes: (await listMixVersions(track.id)).map(mixView) });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request, STAFF);
    const { track } = await trackFor(user, params.trackId);
    const declared = request.headers.get("Content-Length");
    const headerName = request.headers.get("X-File-Name");
    const fileName = headerName ? decodeURIComponent(headerName) : new URL(request.url).searchParams.get("name");
    try {
      const mix = await receiveMixUpload({ trackId: track.id, userId: user.id, fileName, body: request.body, declaredBytes: declared ? Number(declared) : null });
      return json({ mix: mixView(mix) }, 201);
    } catch (error) {
      if (error instanceof UploadError) return apiError(error.status, error.message, { file: error.message });
      throw error;
    }
  });
}

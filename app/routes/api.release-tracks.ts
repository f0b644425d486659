// GET /api/releases/:releaseId/tracks: the release's tracks. POST: a new track (staff).
import type { Route } from "./+types/api.release-tracks";
import { apiError, apiNotFound, handleApi, json, methodNotAllowed, readJson, requireApiUser } from "../lib/api.server.ts";
import { releaseFor } from "../lib/api-access.server.ts";
import { isStaff } from "../lib/roles.ts";
import { createTrack, getTrack, isUniqueViolation, listTracks, nextTrackPosition, trackAtPosition } from "../models/track.server.ts";
import { apiTrackSchema } from "../schemas/api.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const release = await releaseFor(user, params.releaseId);
    return json({ release, tracks: await listTracks(release.id) });
  });
}

export async function action({ request, params }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request);
    const release = await releaseFor(user, params.releaseId);
    // A client sees the release but may not change it: the same 404 as the pages.
    if (!isStaff(user.role)) return apiNotFound();
    const input = await readJson(request, apiTrackSchema);
    const position = input.position ?? (await nextTrackPosition(release.id));
    const taken = () => apiError(400, "Some fields are not valid", { position: `position ${position} is taken on this release` });
    if (await trackAtPosition(release.id, position)) return taken();
    try {
      const id = await createTrack(release.id, { title: input.title, position, isrc: input.isrc });
      return json({ track: await getTrack(release.id, id) }, 201);
    } catch (error) {
      if (isUniqueViolation(error)) return taken();
      throw error;
    }
  });
}

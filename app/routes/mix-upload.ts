// POST …/tracks/:trackId/mixes: one mix file as the raw request body (the
// upload form's script sends each file this way, with its name in
// X-File-Name, to show progress); answers JSON. Staff of the studio only.
import type { Route } from "./+types/mix-upload";
import { STAFF } from "../lib/roles.ts";
import { requireTrackAccess } from "../lib/render-access.server.ts";
import { receiveMixUpload, UploadError } from "../lib/upload.server.ts";

export async function action({ request, params }: Route.ActionArgs) {
  const { user, track } = await requireTrackAccess(request, params, STAFF);
  if (request.method !== "POST") return Response.json({ error: "Send the file with POST." }, { status: 405 });
  const declared = request.headers.get("Content-Length");
  try {
    const mix = await receiveMixUpload({
      trackId: track.id,
      userId: user.id,
      fileName: decodeURIComponent(request.headers.get("X-File-Name") ?? "mix.wav"),
      body: request.body,
      declaredBytes: declared ? Number(declared) : null,
    });
    return Response.json({ mix: { id: mix.id, version: mix.version } }, { status: 201 });
  } catch (error) {
    if (error instanceof UploadError) return Response.json({ error: error.message }, { status: error.status });
    throw error;
  }
}

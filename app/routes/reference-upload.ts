// POST /releases/:releaseId/references: one reference WAV as the raw request
// body (the upload form's script sends each file this way, its name in
// X-File-Name, to show progress); answers JSON. Staff of the studio only:
// anyone else gets a 404, as for every reference path.
import type { Route } from "./+types/reference-upload";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { STAFF } from "../lib/roles.ts";
import { receiveReferenceUpload, UploadError } from "../lib/upload.server.ts";

export async function action({ request, params }: Route.ActionArgs) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  if (request.method !== "POST") return Response.json({ error: "Send the file with POST." }, { status: 405 });
  const declared = request.headers.get("Content-Length");
  try {
    const reference = await receiveReferenceUpload({
      releaseId: release.id,
      userId: user.id,
      fileName: decodeURIComponent(request.headers.get("X-File-Name") ?? "reference.wav"),
      body: request.body,
      declaredBytes: declared ? Number(declared) : null,
    });
    return Response.json({ reference: { id: reference.id, name: reference.originalName } }, { status: 201 });
  } catch (error) {
    if (error instanceof UploadError) return Response.json({ error: error.message }, { status: error.status });
    throw error;
  }
}

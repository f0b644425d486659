// GET /releases/:releaseId/references/:referenceId/audio: a reference's file
// for the studio's players (byte ranges for progressive loading). Staff only;
// a client, or a reference of another release, gets a 404.
import type { Route } from "./+types/reference-audio";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { isUuid } from "../lib/ids.ts";
import { STAFF } from "../lib/roles.ts";
import { getReference } from "../models/reference.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId, STAFF);
  const reference = isUuid(params.referenceId) ? await getReference(release.id, params.referenceId) : undefined;
  if (!reference) throw notFound();
  const name = downloadName([release.title, "reference", reference.originalName.replace(/\.wav$/i, "")], "wav");
  return serveStored(request, reference.storageKey, { fileName: name, contentType: "audio/wav", disposition: "inline" });
}

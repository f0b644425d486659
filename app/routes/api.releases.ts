// GET /api/releases[?limit=&after=]: the releases the caller may see, newest first, a page at a time. POST: a new release (staff).
import type { Route } from "./+types/api.releases";
import { apiError, handleApi, json, methodNotAllowed, readJson, requireApiUser } from "../lib/api.server.ts";
import { STAFF } from "../lib/roles.ts";
import { pageOf, requestedPage } from "../lib/api-paging.server.ts";
import { clientInStudio } from "../models/client.server.ts";
import { createRelease, getReleaseForUser, listReleasesForUser } from "../models/release.server.ts";
import { apiReleaseSchema } from "../schemas/api.ts";
import { RELEASE_STATUSES, type ReleaseStatus } from "../schemas/release.ts";

export async function loader({ request }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const status = new URL(request.url).searchParams.get("status");
    if (status && !RELEASE_STATUSES.includes(status as ReleaseStatus)) return apiError(400, "Unknown status", { status: `must be one of ${RELEASE_STATUSES.join(", ")}` });
    const page = await requestedPage(new URL(request.url), "releases");
    const { items, nextAfter } = pageOf(await listReleasesForUser(user, status ? { status: status as ReleaseStatus } : {}, page), page);
    return json({ releases: items, nextAfter });
  });
}

export async function action({ request }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request, STAFF);
    const input = await readJson(request, apiReleaseSchema);
    if (!(await clientInStudio(user.studioId, input.clientId))) return apiError(400, "Some fields are not valid", { clientId: "must be the id of one of the studio's clients" });
    const id = await createRelease(user.studioId, input);
    return json({ release: await getReleaseForUser(user, id) }, 201, { Location: `/api/releases/${id}/tracks` });
  });
}

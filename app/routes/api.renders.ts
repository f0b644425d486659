// GET /api/renders?trackId=…[&limit=&after=]: a track's renders the caller may see, newest first, a page at a time
// (a client: those sent for review; app/lib/render-visibility.server.ts).
// POST: queue a render of a mix through a chain revision (staff).
import type { Route } from "./+types/api.renders";
import { apiError, handleApi, json, methodNotAllowed, readJson, requireApiUser } from "../lib/api.server.ts";
import { mixFor, revisionForTrack, trackFor } from "../lib/api-access.server.ts";
import { renderView } from "../lib/api-views.server.ts";
import { pageOf, requestedPage } from "../lib/api-paging.server.ts";
import { STAFF } from "../lib/roles.ts";
import { createRender, listRendersForTrack } from "../models/render.server.ts";
import { printRefusal } from "../../dsp/chain/print-check.ts";
import { apiRenderSchema } from "../schemas/api.ts";

export async function loader({ request }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const trackId = new URL(request.url).searchParams.get("trackId");
    if (!trackId) return apiError(400, "Name the track", { trackId: "is required (?trackId=…)" });
    const { track } = await trackFor(user, trackId);
    const page = await requestedPage(new URL(request.url), "renders");
    const { items, nextAfter } = pageOf(await listRendersForTrack(track.id, user, page), page);
    return json({ renders: items.map((r) => ({ ...renderView(r), mixVersion: r.mixVersion })), nextAfter });
  });
}

export async function action({ request }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["GET", "POST"]);
    const user = await requireApiUser(request, STAFF);
    const input = await readJson(request, apiRenderSchema);
    // In a body, a mix the caller may not use is a field error rather than a 404 of the route.
    const { mix } = await mixFor(user, input.mixId).catch((thrown: unknown) => {
      if (thrown instanceof Response && thrown.status === 404) throw apiError(400, "Some fields are not valid", { mixId: "must be a mix of one of the studio's tracks" });
      throw thrown;
    });
    const revision = await revisionForTrack(user, input.chainRevisionId, mix.trackId);
    if (!revision) return apiError(400, "Some fields are not valid", { chainRevisionId: "must be a revision of a studio template or of this track's chain" });
    const refusal = input.kind === "print" ? printRefusal(revision.params) : null;
    if (refusal) return apiError(400, "Some fields are not valid", { chainRevisionId: refusal });
    if (input.region && input.region.endS > mix.durationSeconds + 1e-6) {
      return apiError(400, "Some fields are not valid", { "region.endS": `must be within the mix (${mix.durationSeconds.toFixed(2)} s)` });
    }
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: input.kind, region: input.region, targetLufs: input.targetLufs, createdBy: user.id });
    return json({ render: renderView(render) }, 201, { Location: `/api/renders/${render.id}` });
  });
}

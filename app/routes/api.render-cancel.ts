// POST /api/renders/:renderId/cancel: cancel a queued or running render (staff).
// A finished render is answered as it is, unchanged.
import type { Route } from "./+types/api.render-cancel";
import { apiNotFound, handleApi, json, methodNotAllowed, requireApiUser } from "../lib/api.server.ts";
import { renderFor } from "../lib/api-access.server.ts";
import { renderView } from "../lib/api-views.server.ts";
import { STAFF } from "../lib/roles.ts";
import { cancelRender } from "../models/render.server.ts";

export async function loader() {
  return methodNotAllowed(["POST"]);
}

export async function action({ request, params }: Route.ActionArgs) {
  return handleApi(async () => {
    if (request.method !== "POST") return methodNotAllowed(["POST"]);
    const user = await requireApiUser(request, STAFF);
    const { render } = await renderFor(user, params.renderId);
    const after = await cancelRender(render.id);
    if (!after) return apiNotFound();
    return json({ render: renderView(after) });
  });
}

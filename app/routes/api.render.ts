// GET /api/renders/:renderId: a render's state, progress and analyses.
import type { Route } from "./+types/api.render";
import { handleApi, json, requireApiUser } from "../lib/api.server.ts";
import { renderFor } from "../lib/api-access.server.ts";
import { renderView } from "../lib/api-views.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const { render, mix, track } = await renderFor(user, params.renderId);
    return json({ render: { ...renderView(render), trackId: track.id, mixVersion: mix.version } });
  });
}

// GET …/renders/:renderId/progress: the render's state as JSON, cheap enough
// to poll every second (no analyses, no traces).
import type { Route } from "./+types/render-progress";
import { requireTrackRender } from "../lib/render-access.server.ts";
import { getRenderStatus } from "../models/render.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { render } = await requireTrackRender(request, params);
  const status = (await getRenderStatus(render.id))!;
  return Response.json(
    { id: status.id, state: status.state, progress: status.progress, error: status.error, attempts: status.attempts },
    { headers: { "Cache-Control": "no-store" } },
  );
}

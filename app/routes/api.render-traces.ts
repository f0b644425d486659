// GET /api/renders/:renderId/traces: the finished render's gain-reduction and
// loudness traces, as the renderer stored them (JSON).
import type { Route } from "./+types/api.render-traces";
import { apiError, apiNotFound, handleApi, requireApiUser } from "../lib/api.server.ts";
import { renderFor } from "../lib/api-access.server.ts";
import { storage, StorageNotFoundError } from "../lib/storage/storage.server.ts";
import { Readable } from "node:stream";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const { render } = await renderFor(user, params.renderId);
    if (render.state !== "done") return apiError(409, `The render has no traces yet (it is ${render.state})`);
    if (!render.tracesKey) return apiNotFound();
    try {
      const body = Readable.toWeb(await storage().get(render.tracesKey)) as ReadableStream<Uint8Array>;
      return new Response(body, { headers: { "Content-Type": "application/json; charset=utf-8", "Cache-Control": "private, max-age=3600" } });
    } catch (error) {
      if (error instanceof StorageNotFoundError) return apiNotFound();
      throw error;
    }
  });
}

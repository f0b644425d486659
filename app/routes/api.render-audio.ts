// GET /api/renders/:renderId/audio: a finished preview or print as WAV, with
// byte ranges. A client gets a render sent to them for review, and a print's
// file only once the release's invoice is paid (403 before);
// app/lib/render-visibility.server.ts.
import type { Route } from "./+types/api.render-audio";
import { apiError, handleApi, requireApiUser } from "../lib/api.server.ts";
import { renderFor } from "../lib/api-access.server.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { FINALS_LOCKED_MESSAGE, mayDownloadRender } from "../lib/render-visibility.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  return handleApi(async () => {
    const user = await requireApiUser(request);
    const { release, track, mix, render } = await renderFor(user, params.renderId);
    if (render.state !== "done" || !render.output) return apiError(409, `The render has no audio yet (it is ${render.state})`);
    if (!(await mayDownloadRender(user, render, release.id))) return apiError(403, FINALS_LOCKED_MESSAGE);
    const name = downloadName([release.title, `${String(track.position).padStart(2, "0")} ${track.title}`, `v${mix.version} ${render.kind} ${render.id.slice(0, 8)}`], "wav");
    return serveStored(request, render.output.key, { fileName: name, contentType: "audio/wav" });
  });
}

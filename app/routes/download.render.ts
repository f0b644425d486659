// GET …/renders/:renderId/download: a finished preview or print as WAV, with
// byte ranges so the page's <audio> element can seek (?inline=1 is for that
// player). Who may have it is app/lib/render-visibility.server.ts: a client
// only a render sent for review, and a print's file only once the release's
// invoice is paid; before that the player gets the print's first stretch.
import type { Route } from "./+types/download.render";
import { notFound } from "../lib/http.server.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { serveRenderAudio } from "../lib/render-audio.server.ts";
import { requireTrackRender } from "../lib/render-access.server.ts";
import { finalsLocked, mayDownloadRender } from "../lib/render-visibility.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, release, track, render, mix } = await requireTrackRender(request, params);
  if (render.state !== "done" || !render.output) throw notFound();
  const inline = new URL(request.url).searchParams.get("inline") === "1";
  if (!inline && !(await mayDownloadRender(user, render, release.id))) throw finalsLocked();
  const kind = render.kind === "print" ? "print" : "preview";
  const name = downloadName([release.title, `${String(track.position).padStart(2, "0")} ${track.title}`, `v${mix.version} ${kind} ${render.id.slice(0, 8)}`], "wav");
  // The page's player: whole, or an unpaid print's stretch (render-visibility).
  if (inline) return serveRenderAudio(request, user, { kind: render.kind, outputKey: render.output.key }, release.id, { fileName: name });
  return serveStored(request, render.output.key, { fileName: name, contentType: "audio/wav", disposition: inline ? "inline" : "attachment" });
}

// GET …/renders/:renderId/download: a finished preview or print as WAV, with
// byte ranges so the page's <audio> element can seek. Anyone who may see the
// release (its client too) may download; ?inline=1 is for the player.
import type { Route } from "./+types/download.render";
import { notFound } from "../lib/http.server.ts";
import { downloadName, serveStored } from "../lib/http-range.server.ts";
import { requireTrackRender } from "../lib/render-access.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release, track, render, mix } = await requireTrackRender(request, params);
  if (render.state !== "done" || !render.output) throw notFound();
  const inline = new URL(request.url).searchParams.get("inline") === "1";
  const kind = render.kind === "print" ? "print" : "preview";
  const name = downloadName([release.title, `${String(track.position).padStart(2, "0")} ${track.title}`, `v${mix.version} ${kind} ${render.id.slice(0, 8)}`], "wav");
  return serveStored(request, render.output.key, { fileName: name, contentType: "audio/wav", disposition: inline ? "inline" : "attachment" });
}

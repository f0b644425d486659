// The audio of a finished render, for the A/B player: staff hear every render
// of their studio, a client only those sent to them for review. Answers byte
// ranges (app/lib/http-range.server.ts), so the browser may fetch a long print
// in parts.
import type { Route } from "./+types/render-audio";
import { requireUser } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { serveRenderAudio } from "../lib/render-audio.server.ts";
import { getRenderForViewer } from "../models/review.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  // Stricter than the download route: a client hears only renders sent for review.
  const render = await getRenderForViewer(user, params.renderId);
  if (!render) throw notFound();
  // A print of an unpaid release reaches a client only as a stretch (render-visibility).
  return serveRenderAudio(request, user, render, render.releaseId, { fileName: `render-${render.id}.wav` });
}

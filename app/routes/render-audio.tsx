// The audio of a finished render, for the A/B player: staff hear every render
// of their studio, a client only those sent to them for review. Answers byte
// ranges (app/lib/http-range.server.ts), so the browser may fetch a long print
// in parts.
import type { Route } from "./+types/render-audio";
import { requireUser } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { serveStored } from "../lib/http-range.server.ts";
import { getRenderForViewer } from "../models/review.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  // Stricter than the download route: a client hears only renders sent for review.
  const render = await getRenderForViewer(user, params.renderId);
  if (!render) throw notFound();
  return serveStored(request, render.outputKey, { fileName: `render-${render.id}.wav`, contentType: "audio/wav", disposition: "inline" });
}

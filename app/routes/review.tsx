// /releases/:releaseId/tracks/:trackId/review — the address review e-mails
// carried before the review room; it leads there (with the render asked for),
// so every link a client was ever given lands on a page that plays.
import { redirect } from "react-router";
import type { Route } from "./+types/review";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { roomPath } from "../lib/review/room-path.ts";
import { getTrack } from "../models/track.server.ts";

export async function loader({ request, params }: Route.LoaderArgs) {
  const { release } = await requireReleaseAccess(request, params.releaseId);
  const track = await getTrack(release.id, params.trackId);
  if (!track) throw notFound();
  throw redirect(roomPath(release.id, track.id, new URL(request.url).searchParams.get("render")));
}

// Access to a track's mixes and renders by their ids in the path: the release
// check first (requireReleaseAccess), then that the track is the release's
// and the mix or render the track's, and for a render the visibility rule
// (render-visibility.server.ts: a client sees only what was sent for review).
// Anything else is a 404.
import { requireReleaseAccess } from "./auth.server.ts";
import { notFound } from "./http.server.ts";
import { isUuid } from "./ids.ts";
import type { Role } from "./roles.ts";
import { getTrack, type Track } from "../models/track.server.ts";
import { getMix, type Mix } from "../models/mix.server.ts";
import { getRender, type Render } from "../models/render.server.ts";
import { mayViewRender } from "./render-visibility.server.ts";

type Params = { releaseId?: string; trackId?: string; mixId?: string; renderId?: string };

export async function requireTrackAccess(request: Request, params: Params, roles?: readonly Role[]) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId, roles);
  const track: Track | undefined = params.trackId ? await getTrack(release.id, params.trackId) : undefined;
  if (!track) throw notFound();
  return { user, release, track };
}

export async function requireTrackMix(request: Request, params: Params, roles?: readonly Role[]) {
  const access = await requireTrackAccess(request, params, roles);
  const mix: Mix | undefined = isUuid(params.mixId) ? await getMix(params.mixId) : undefined;
  if (!mix || mix.trackId !== access.track.id) throw notFound();
  return { ...access, mix };
}

export async function requireTrackRender(request: Request, params: Params, roles?: readonly Role[]) {
  const access = await requireTrackAccess(request, params, roles);
  const render: Render | undefined = isUuid(params.renderId) ? await getRender(params.renderId) : undefined;
  const mix = render ? await getMix(render.mixId) : undefined;
  if (!render || !mix || mix.trackId !== access.track.id) throw notFound();
  if (!(await mayViewRender(access.user, render.id))) throw notFound();
  return { ...access, render, mix };
}

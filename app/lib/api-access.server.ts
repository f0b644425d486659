// The API's record lookups, with the pages' rules: staff see their studio's
// records, a client member only its client's releases and their tracks, and
// of their renders only those sent for review (render-visibility.server.ts);
// everything else, including a malformed id, is a JSON 404.
import { apiNotFound } from "./api.server.ts";
import { isUuid } from "./ids.ts";
import { isStaff } from "./roles.ts";
import { db } from "./db.server.ts";
import { getChainForStaff, type ChainPlace } from "./chain-access.server.ts";
import type { CurrentUser } from "../models/user.server.ts";
import { getReleaseForUser, type ReleaseDetail } from "../models/release.server.ts";
import { getTrack, type Track } from "../models/track.server.ts";
import { getMix, type Mix } from "../models/mix.server.ts";
import { getRender, type Render } from "../models/render.server.ts";
import { getRevision, type ChainRevision } from "../models/chain.server.ts";
import { mayViewRender } from "./render-visibility.server.ts";

export async function releaseFor(user: CurrentUser, releaseId: string | undefined): Promise<ReleaseDetail> {
  const release = isUuid(releaseId) ? await getReleaseForUser(user, releaseId) : undefined;
  if (!release) throw apiNotFound();
  return release;
}

export async function trackFor(user: CurrentUser, trackId: string | undefined): Promise<{ release: ReleaseDetail; track: Track }> {
  if (!isUuid(trackId)) throw apiNotFound();
  const row = await db("tracks").where({ id: trackId }).first<{ release_id: string } | undefined>("release_id");
  if (!row) throw apiNotFound();
  const release = await releaseFor(user, row.release_id);
  const track = await getTrack(release.id, trackId);
  if (!track) throw apiNotFound();
  return { release, track };
}

export async function mixFor(user: CurrentUser, mixId: string | undefined): Promise<{ release: ReleaseDetail; track: Track; mix: Mix }> {
  const mix = isUuid(mixId) ? await getMix(mixId) : undefined;
  if (!mix) throw apiNotFound();
  return { ...(await trackFor(user, mix.trackId)), mix };
}

export async function renderFor(user: CurrentUser, renderId: string | undefined): Promise<{ release: ReleaseDetail; track: Track; mix: Mix; render: Render }> {
  const render = isUuid(renderId) ? await getRender(renderId) : undefined;
  if (!render) throw apiNotFound();
  const access = await mixFor(user, render.mixId);
  if (!(await mayViewRender(user, render.id))) throw apiNotFound();
  return { ...access, render };
}

export async function chainFor(user: CurrentUser, chainId: string | undefined): Promise<ChainPlace> {
  const chain = await getChainForStaff(user, chainId);
  if (!chain) throw apiNotFound();
  return chain;
}

/** A revision the staff member may render: its chain is a studio template or a chain of that track. */
export async function revisionForTrack(user: CurrentUser, revisionId: string, trackId: string): Promise<ChainRevision | undefined> {
  if (!isStaff(user.role) || !isUuid(revisionId)) return undefined;
  const revision = await getRevision(revisionId);
  if (!revision) return undefined;
  const chain = await getChainForStaff(user, revision.chainId);
  if (!chain || (chain.trackId !== null && chain.trackId !== trackId)) return undefined;
  return revision;
}

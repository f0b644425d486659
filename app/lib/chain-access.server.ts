// Which chains a member may open: staff of the chain's studio only (clients
// hear renders, they do not edit chains). Anything else reads as missing.
import { db } from "./db.server.ts";
import type { CurrentUser } from "../models/user.server.ts";
import { isStaff } from "./roles.ts";
import { createChain, createRevision, getChain, listRevisions, type Chain } from "../models/chain.server.ts";
import { EMPTY_CHAIN } from "./chain-templates.ts";

export type ChainPlace = Chain & { track: { id: string; title: string; releaseId: string; releaseTitle: string } | null };

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function getChainForStaff(user: CurrentUser, chainId: string | undefined): Promise<ChainPlace | undefined> {
  if (!isStaff(user.role) || !chainId || !UUID.test(chainId)) return undefined;
  const chain = await getChain(chainId);
  if (!chain || chain.studioId !== user.studioId) return undefined;
  if (!chain.trackId) return { ...chain, track: null };
  const track = await db("tracks as t")
    .join("releases as r", "r.id", "t.release_id")
    .where({ "t.id": chain.trackId, "r.studio_id": user.studioId })
    .first<{ id: string; title: string; release_id: string; release_title: string } | undefined>("t.id", "t.title", "t.release_id", "r.title as release_title");
  if (!track) return undefined;
  return { ...chain, track: { id: track.id, title: track.title, releaseId: track.release_id, releaseTitle: track.release_title } };
}

/** The studio's templates, each with the number of its latest revision. */
export async function listTemplatesWithRevision(studioId: string): Promise<{ id: string; name: string; revision: number; updatedAt: Date }[]> {
  return db("chains as c")
    .leftJoin("chain_revisions as cr", "cr.chain_id", "c.id")
    .where({ "c.studio_id": studioId })
    .whereNull("c.track_id")
    .groupBy("c.id")
    .orderBy("c.name")
    .select("c.id", "c.name", "c.updated_at as updatedAt", db.raw("coalesce(max(cr.revision), 0)::int as revision"));
}

/** A track's chains, oldest first, each with the number of its latest revision. */
export async function listTrackChainsWithRevision(trackId: string): Promise<{ id: string; name: string; revision: number; updatedAt: Date }[]> {
  return db("chains as c")
    .leftJoin("chain_revisions as cr", "cr.chain_id", "c.id")
    .where({ "c.track_id": trackId })
    .groupBy("c.id")
    .orderBy("c.created_at")
    .select("c.id", "c.name", "c.updated_at as updatedAt", db.raw("coalesce(max(cr.revision), 0)::int as revision"));
}

/**
 * A new chain (for a track, or a template when trackId is null) whose first
 * revision copies the latest revision of a template of the same studio, or
 * starts blank. Returns undefined when the template is not the studio's.
 */
export async function startChain(user: CurrentUser, input: { trackId: string | null; name: string; templateId: string | null }): Promise<Chain | undefined> {
  let params: unknown = EMPTY_CHAIN;
  if (input.templateId) {
    const template = await getChain(input.templateId);
    if (!template || template.studioId !== user.studioId || template.trackId) return undefined;
    const [latest] = await listRevisions(template.id);
    if (latest) params = latest.params;
  }
  const chain = await createChain({ studioId: user.studioId, trackId: input.trackId, name: input.name });
  await createRevision(chain.id, params, user.id);
  return chain;
}

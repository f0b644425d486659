// Chains and their revisions. A chain belongs to a studio and either to one
// track or to no track (a studio template). Saving makes a new, immutable
// revision (max + 1 under a lock on the chain); renders point at revisions,
// so a render can be recalled and re-rendered exactly.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { formatChainErrors, parseChain, type ChainFieldError } from "../../dsp/chain/schema.ts";

export type Chain = { id: string; studioId: string; trackId: string | null; name: string; createdAt: Date; updatedAt: Date };

export type ChainRevision = {
  id: string;
  chainId: string;
  revision: number;
  params: unknown;
  authorId: string | null;
  authorName: string | null;
  createdAt: Date;
};

type ChainRow = { id: string; studio_id: string; track_id: string | null; name: string; created_at: Date; updated_at: Date };
type RevisionRow = { id: string; chain_id: string; revision: number; params: unknown; author_id: string | null; author_name?: string | null; created_at: Date };

const chainFromRow = (row: ChainRow): Chain => ({
  id: row.id,
  studioId: row.studio_id,
  trackId: row.track_id,
  name: row.name,
  createdAt: row.created_at,
  updatedAt: row.updated_at,
});

const revisionFromRow = (row: RevisionRow): ChainRevision => ({
  id: row.id,
  chainId: row.chain_id,
  revision: row.revision,
  params: row.params,
  authorId: row.author_id,
  authorName: row.author_name ?? null,
  createdAt: row.created_at,
});

/** Creates a chain for a track of the studio, or a studio template when trackId is null. */
export async function createChain(input: { studioId: string; trackId: string | null; name: string }): Promise<Chain> {
  if (input.trackId) {
    const track = await db("tracks as t")
      .join("releases as r", "r.id", "t.release_id")
      .where({ "t.id": input.trackId, "r.studio_id": input.studioId })
      .first("t.id");
    if (!track) throw new Error("the track is not one of this studio's");
  }
  const [row] = await db("chains")
    .insert({ studio_id: input.studioId, track_id: input.trackId, name: input.name.trim() })
    .returning<ChainRow[]>("*");
  return chainFromRow(row);
}

export async function getChain(id: string): Promise<Chain | undefined> {
  const row = await db("chains").where({ id }).first<ChainRow | undefined>("*");
  return row && chainFromRow(row);
}

export async function listTemplates(studioId: string): Promise<Chain[]> {
  const rows = await db("chains").where({ studio_id: studioId }).whereNull("track_id").orderBy("name").select<ChainRow[]>("*");
  return rows.map(chainFromRow);
}

export async function listTrackChains(trackId: string): Promise<Chain[]> {
  const rows = await db("chains").where({ track_id: trackId }).orderBy("created_at").select<ChainRow[]>("*");
  return rows.map(chainFromRow);
}

/** Parameters the renderer's schema refuses, with an error per field for the form beside it. */
export class ChainInvalidError extends Error {
  constructor(readonly fieldErrors: ChainFieldError[]) {
    super(`the chain is not valid:\n${formatChainErrors(fieldErrors)}`);
    this.name = "ChainInvalidError";
  }
}

/**
 * Saves the parameters as the chain's next revision. They are checked by the
 * renderer's own schema, and stored as it reads them (defaults filled in), so
 * a recall months later renders the same even if a default has changed.
 */
export async function createRevision(chainId: string, input: unknown, authorId: string | null, trx?: Knex.Transaction): Promise<ChainRevision> {
  const parsed = parseChain(input);
  if (!parsed.ok) throw new ChainInvalidError(parsed.errors);
  const params = parsed.chain;
  const run = async (t: Knex.Transaction) => {
    const chain = await t("chains").where({ id: chainId }).forUpdate().first("id");
    if (!chain) throw new Error(`chain ${chainId} does not exist`);
    const { max } = (await t("chain_revisions").where({ chain_id: chainId }).max<{ max: number | null }>("revision as max").first()) ?? { max: null };
    const [row] = await t("chain_revisions")
      .insert({ chain_id: chainId, revision: (max ?? 0) + 1, params: JSON.stringify(params), author_id: authorId })
      .returning<RevisionRow[]>("*");
    await t("chains").where({ id: chainId }).update({ updated_at: t.fn.now() });
    return revisionFromRow(row);
  };
  return trx ? run(trx) : db.transaction(run);
}

export async function getRevision(id: string): Promise<ChainRevision | undefined> {
  const row = await db("chain_revisions as cr")
    .leftJoin("users as u", "u.id", "cr.author_id")
    .where({ "cr.id": id })
    .first<RevisionRow | undefined>("cr.*", "u.name as author_name");
  return row && revisionFromRow(row);
}

/** A chain's revisions, newest first. */
export async function listRevisions(chainId: string): Promise<ChainRevision[]> {
  const rows = await db("chain_revisions as cr")
    .leftJoin("users as u", "u.id", "cr.author_id")
    .where({ "cr.chain_id": chainId })
    .orderBy("cr.revision", "desc")
    .select<RevisionRow[]>("cr.*", "u.name as author_name");
  return rows.map(revisionFromRow);
}

export type ParameterChange = {
  /** Where in the chain, e.g. `stages[2].bands[1].ratio`. */
  path: string;
  change: "changed" | "added" | "removed";
  /** null where the parameter did not exist before (added) or after (removed). */
  before: unknown;
  after: unknown;
};

const isObject = (value: unknown): value is Record<string, unknown> => value !== null && typeof value === "object" && !Array.isArray(value);

/**
 * What changed between two chains' parameters, leaf by leaf. Stages are
 * compared by position: a stage moved from third to second shows as the
 * parameters of both positions changing, which is what a render hears.
 */
export function diffParams(before: unknown, after: unknown, path = ""): ParameterChange[] {
  if (Array.isArray(before) && Array.isArray(after)) {
    const changes: ParameterChange[] = [];
    for (let i = 0; i < Math.max(before.length, after.length); i++) {
      changes.push(...diffParams(i < before.length ? before[i] : undefined, i < after.length ? after[i] : undefined, `${path}[${i}]`));
    }
    return changes;
  }
  if (isObject(before) && isObject(after)) {
    const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])];
    return keys.flatMap((key) => diffParams(before[key], after[key], path ? `${path}.${key}` : key));
  }
  if (before === undefined && after === undefined) return [];
  // A stage or band added or removed whole: each of its parameters, one by one.
  if (before === undefined && (isObject(after) || Array.isArray(after))) return diffParams(Array.isArray(after) ? [] : {}, after, path);
  if (after === undefined && (isObject(before) || Array.isArray(before))) return diffParams(before, Array.isArray(before) ? [] : {}, path);
  if (before === undefined) return [{ path, change: "added", before: null, after }];
  if (after === undefined) return [{ path, change: "removed", before, after: null }];
  if (JSON.stringify(before) === JSON.stringify(after)) return [];
  return [{ path, change: "changed", before, after }];
}

/** The changes from revision `fromId` to revision `toId` of the same chain. */
export async function diffRevisions(fromId: string, toId: string): Promise<ParameterChange[]> {
  const [from, to] = await Promise.all([getRevision(fromId), getRevision(toId)]);
  if (!from || !to) throw new Error("revision not found");
  if (from.chainId !== to.chainId) throw new Error("the two revisions belong to different chains");
  return diffParams(from.params, to.params);
}

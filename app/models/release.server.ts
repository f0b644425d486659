// Releases, always read through the user who asks: staff see their studio's,
// a client member sees only their own client's.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { isUuid } from "../lib/ids.ts";
import { keysetPage, type Page } from "../lib/keyset.server.ts";
import { isStaff } from "../lib/roles.ts";
import type { ReleaseInput, ReleaseKind, ReleaseStatus } from "../schemas/release.ts";
import type { CurrentUser } from "./user.server.ts";

export type ReleaseRow = {
  id: string;
  title: string;
  kind: ReleaseKind;
  status: ReleaseStatus;
  clientName: string;
  trackCount: number;
  dueOn: string | null;
  updatedAt: string;
};

export type ReleaseDetail = {
  id: string;
  studioId: string;
  clientId: string;
  clientName: string;
  title: string;
  kind: ReleaseKind;
  status: ReleaseStatus;
  dueOn: string | null;
};

function scopeTo(query: Knex.QueryBuilder, user: CurrentUser): Knex.QueryBuilder {
  query.where("r.studio_id", user.studioId);
  // A client member without a client would see nothing rather than everything.
  if (!isStaff(user.role)) query.where("r.client_id", user.clientId ?? "00000000-0000-0000-0000-000000000000");
  return query;
}

export async function listReleasesForUser(user: CurrentUser, filter: { status?: ReleaseStatus } = {}, page?: Page): Promise<ReleaseRow[]> {
  const query = db("releases as r")
    .join("clients as c", "c.id", "r.client_id")
    .select(
      "r.id",
      "r.title",
      "r.kind",
      "r.status",
      "c.name as clientName",
      db.raw(`(SELECT count(*)::int FROM tracks t WHERE t.release_id = r.id) AS "trackCount"`),
      db.raw(`to_char(r.due_on, 'YYYY-MM-DD') AS "dueOn"`),
      db.raw(`to_char(r.updated_at AT TIME ZONE 'UTC', 'YYYY-MM-DD') AS "updatedAt"`),
    )
    .orderBy("r.created_at", "desc");
  scopeTo(query, user);
  if (filter.status) query.where("r.status", filter.status);
  if (page) keysetPage(query, page, { table: "releases", at: "r.created_at", id: "r.id", column: "created_at" });
  return query;
}

export async function getReleaseForUser(user: CurrentUser, releaseId: string): Promise<ReleaseDetail | undefined> {
  if (!isUuid(releaseId)) return undefined;
  const query = db("releases as r")
    .join("clients as c", "c.id", "r.client_id")
    .where("r.id", releaseId)
    .first(
      "r.id",
      "r.studio_id as studioId",
      "r.client_id as clientId",
      "c.name as clientName",
      "r.title",
      "r.kind",
      "r.status",
      db.raw(`to_char(r.due_on, 'YYYY-MM-DD') AS "dueOn"`),
    );
  scopeTo(query, user);
  return query;
}

export async function createRelease(studioId: string, input: ReleaseInput): Promise<string> {
  const [row] = await db("releases")
    .insert({ studio_id: studioId, client_id: input.clientId, title: input.title, kind: input.kind, status: input.status, due_on: input.dueOn })
    .returning<{ id: string }[]>("id");
  return row.id;
}

export async function updateRelease(studioId: string, releaseId: string, input: ReleaseInput): Promise<void> {
  await db("releases")
    .where({ id: releaseId, studio_id: studioId })
    .update({ client_id: input.clientId, title: input.title, kind: input.kind, status: input.status, due_on: input.dueOn, updated_at: db.fn.now() });
}

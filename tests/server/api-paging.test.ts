// Keyset paging of the API's lists: pages in the unpaged order with nothing
// repeated or skipped, even for rows sharing a timestamp and when new rows
// arrive between pages; bad limits and cursors are field errors.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { createApiToken } from "../../app/models/api-token.server.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import * as apiReleases from "../../app/routes/api.releases.ts";
import * as apiRenders from "../../app/routes/api.renders.ts";

let f: Fixture;
let token: string;
let stored: StoredRender;

beforeAll(async () => {
  f = await createFixture();
  token = (await createApiToken({ userId: f.users.owner.id, studioId: f.studioId, name: "Pager" })).token;
  // Five more releases in one statement: they share created_at, so the id breaks the ties.
  await db("releases").insert(Array.from({ length: 5 }, (_, i) => ({ studio_id: f.studioId, client_id: f.clientId, title: `Paged ${i} ${f.tag}`, kind: "single" })));
  stored = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
  const render = await db("renders").where({ id: stored.renderId }).first("mix_id", "chain_revision_id");
  await db("renders").insert(Array.from({ length: 4 }, () => ({ mix_id: render.mix_id, chain_revision_id: render.chain_revision_id, kind: "preview" })));
});
afterAll(async () => {
  if (stored) await db("renders").where({ mix_id: stored.mixId }).whereNot({ id: stored.renderId }).delete();
  await stored?.cleanup();
  await destroyFixture(f);
});

async function get(handler: unknown, path: string): Promise<{ status: number; body: Record<string, unknown> }> {
  const request = new Request(`http://tidemark.test${path}`, { headers: { Authorization: `Bearer ${token}` } });
  const response = (await (handler as (a: unknown) => Promise<Response>)({ request, params: {}, context: {} })) as Response;
  return { status: response.status, body: (await response.json()) as Record<string, unknown> };
}

async function walk(handler: unknown, base: string, key: string, limit: number): Promise<{ ids: string[]; pages: number }> {
  const ids: string[] = [];
  let after: string | null = null;
  let pages = 0;
  do {
    const sep = base.includes("?") ? "&" : "?";
    const { status, body } = await get(handler, `${base}${sep}limit=${limit}${after ? `&after=${after}` : ""}`);
    expect(status).toBe(200);
    ids.push(...(body[key] as { id: string }[]).map((r) => r.id));
    after = body.nextAfter as string | null;
    pages++;
  } while (after && pages < 50);
  return { ids, pages };
}

describe("API paging", () => {
  it("pages the releases in the unpaged order, nothing repeated or skipped", async () => {
    const all = await get(apiReleases.loader, "/api/releases");
    const expected = (all.body.releases as { id: string }[]).map((r) => r.id);
    expect(expected).toHaveLength(7); // the fixture's two and five more
    expect(all.body.nextAfter).toBeNull();
    const paged = await walk(apiReleases.loader, "/api/releases", "releases", 2);
    expect(paged.ids).toEqual(expected);
    expect(paged.pages).toBe(4);
  });

  it("pages a track's renders, and a row added between pages does not repeat one", async () => {
    const first = await get(apiRenders.loader, `/api/renders?trackId=${f.trackId}&limit=3`);
    const firstIds = (first.body.renders as { id: string }[]).map((r) => r.id);
    expect(firstIds).toHaveLength(3);
    const render = await db("renders").where({ id: stored.renderId }).first("mix_id", "chain_revision_id");
    await db("renders").insert({ mix_id: render.mix_id, chain_revision_id: render.chain_revision_id, kind: "preview" });
    const rest = await get(apiRenders.loader, `/api/renders?trackId=${f.trackId}&limit=10&after=${first.body.nextAfter}`);
    const restIds = (rest.body.renders as { id: string }[]).map((r) => r.id);
    expect(restIds).toHaveLength(2); // five before the new one, three already seen
    expect(restIds.filter((id) => firstIds.includes(id))).toEqual([]);
    expect(rest.body.nextAfter).toBeNull();
  });

  it("refuses a bad limit or cursor with the field named", async () => {
    for (const [query, field] of [["limit=0", "limit"], ["limit=201", "limit"], ["limit=two", "limit"], ["after=nope", "after"], [`after=${f.otherReleaseId.replace(/.$/, "0")}`, "after"]] as const) {
      const { status, body } = await get(apiReleases.loader, `/api/releases?${query}`);
      expect(status, query).toBe(400);
      expect(Object.keys(body.fieldErrors as object), query).toContain(field);
    }
  });
});

// The desk's page on the server: what it opens (the revision asked for, the
// newest mix, the loudest 30 s from the mix's analysis as previews choose it)
// and what it writes (a revision of what was heard; a preview of the desk's
// region or a print, reusing the latest revision when nothing changed).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { getRender } from "../../app/models/render.server.ts";
import { createChain, createRevision, listRevisions } from "../../app/models/chain.server.ts";
import { saveAnalysis } from "../../app/models/mix.server.ts";
import * as chainPage from "../../app/routes/chain.tsx";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import { gentleChain } from "./worker-harness.ts";

Object.assign(process.env, { TIDEMARK_QUEUE_NAMESPACE: "test-desk" });

let f: Fixture;
let stored: StoredRender;
let chainId: string;

beforeAll(async () => {
  f = await createFixture();
  stored = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
  const chain = await createChain({ studioId: f.studioId, trackId: f.trackId, name: "Desk chain" });
  chainId = chain.id;
  await createRevision(chainId, gentleChain(), f.users.engineer.id);
});
afterAll(async () => {
  await db("renders").where({ mix_id: stored.mixId }).delete();
  await stored?.cleanup();
  await destroyFixture(f);
  await stopQueue();
  await db.destroy();
});

const call = (handler: unknown, request: Request) =>
  Promise.resolve((handler as (a: { request: Request; params: Record<string, string>; context: unknown }) => Promise<unknown>)({ request, params: { chainId }, context: {} })).catch((e: unknown) => e);
type Page = Awaited<ReturnType<typeof chainPage.loader>>;

describe("the desk opens", () => {
  it("on the latest revision and the newest mix, at the loudest 30 s of its analysis", async () => {
    // A 100 s mix whose short-term loudness (10 ms grid, each value over the 3 s before it) is loud from 50 s to 80 s.
    await db("mixes").where({ id: stored.mixId }).update({ frames: 100 * 48_000 });
    const shortTermLufs = Array.from({ length: 10_000 }, (_, j) => ((j + 1) / 100 >= 53 && (j + 1) / 100 <= 80 ? -8 : -30));
    await saveAnalysis(stored.mixId, { gridMs: 10, shortTermLufs, integratedLufs: -20 });
    const page = (await call(chainPage.loader, requestAs(f, "engineer", `/chains/${chainId}`))) as Page;
    expect(page.opened?.revision).toBe(1);
    expect(page.mix?.id).toBe(stored.mixId);
    expect(page.mix?.audioUrl).toBe(`/api/mixes/${stored.mixId}/audio`);
    expect(page.region).toEqual({ startS: 50, endS: 80, loudest: true });
  });

  it("on the revision asked for", async () => {
    await createRevision(chainId, { ...gentleChain(), stages: [] }, f.users.engineer.id);
    const page = (await call(chainPage.loader, requestAs(f, "engineer", `/chains/${chainId}?revision=1`))) as Page;
    expect(page.opened?.revision).toBe(1);
    expect(page.revisions.map((r) => r.revision)).toEqual([2, 1]);
  });
});

describe("from the desk to the record", () => {
  const form = (extra: Record<string, string>) => ({ params: JSON.stringify(gentleChain()), ...extra });

  it("saves what was heard as a new revision and comes back on the same mix", async () => {
    const result = (await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: form({ intent: "save", mix: stored.mixId }) }))) as Response;
    expect(result.headers.get("Location")).toBe(`/chains/${chainId}?saved=3&mix=${stored.mixId}`);
    expect((await listRevisions(chainId))[0].params).toEqual(JSON.parse(JSON.stringify((await listRevisions(chainId))[2].params)));
  });

  it("renders a preview of the desk's region from the latest revision when nothing changed", async () => {
    const result = dataOf<{ render: { id: string; revision: number; created: boolean; url: string } }>(
      await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: form({ intent: "render", kind: "preview", mixId: stored.mixId, startS: "50", endS: "80" }) })),
    );
    expect(result.status).toBe(200);
    expect(result.body.render).toMatchObject({ revision: 3, created: false });
    const render = (await getRender(result.body.render.id))!;
    expect(render).toMatchObject({ kind: "preview", state: "queued", region: { startS: 50, endS: 80 } });
    expect(result.body.render.url).toBe(`/releases/${f.releaseId}/tracks/${f.trackId}/renders/${render.id}`);
  });

  it("saves changed settings first, then prints the whole mix from them", async () => {
    const changed = gentleChain();
    (changed.stages.find((s) => s.type === "compress") as { ratio: number }).ratio = 3.3;
    const result = dataOf<{ render: { id: string; revision: number; created: boolean } }>(
      await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: { params: JSON.stringify(changed), intent: "render", kind: "print", mixId: stored.mixId } })),
    );
    expect(result.body.render).toMatchObject({ revision: 4, created: true });
    expect((await getRender(result.body.render.id))!).toMatchObject({ kind: "print", region: null });
  });

  it("answers a preview without a region, a mix of another track and settings out of range with field errors", async () => {
    const noRegion = dataOf<{ errors: Record<string, string> }>(await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: form({ intent: "render", kind: "preview", mixId: stored.mixId }) })));
    expect(noRegion.status).toBe(400);
    expect(noRegion.body.errors.startS).toBe("Enter where the region starts, in seconds");
    const foreign = dataOf<{ errors: Record<string, string> }>(
      await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: form({ intent: "render", kind: "print", mixId: "00000000-0000-4000-8000-000000000000" }) })),
    );
    expect(foreign.status).toBe(400);
    expect(foreign.body.errors.mixId).toBe("Choose one of this track's mix versions");
    const bad = gentleChain();
    (bad.stages.find((s) => s.type === "compress") as { ratio: number }).ratio = 50;
    const invalid = dataOf<{ errors: Record<string, string> }>(
      await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: { params: JSON.stringify(bad), intent: "render", kind: "print", mixId: stored.mixId } })),
    );
    expect(invalid.status).toBe(400);
    expect(Object.values(invalid.body.errors)).toContain("must be at most 20");
    expect((await listRevisions(chainId)).length).toBe(4);
  });
});

// Chains through their pages: templates seeded once, a chain started from a
// template, saved revisions (new rows, never changed ones), errors keyed by
// the editor's field paths, and the diff between two revisions.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { seedTemplates } from "../../db/seeds/02_templates.ts";
import { listRevisions, listTemplates, listTrackChains } from "../../app/models/chain.server.ts";
import * as chainNew from "../../app/routes/chain-new.tsx";
import * as chainPage from "../../app/routes/chain.tsx";
import * as templatesPage from "../../app/routes/templates.tsx";
import type { Chain } from "../../dsp/chain/schema.ts";

let f: Fixture;
beforeAll(async () => {
  f = await createFixture();
  await seedTemplates(db, f.studioId);
});
afterAll(async () => destroyFixture(f));

const call = (handler: unknown, request: Request, params: Record<string, string>) =>
  (handler as (a: { request: Request; params: Record<string, string>; context: unknown }) => Promise<unknown>)({ request, params, context: {} });

async function gentleId(studioId: string) {
  return (await listTemplates(studioId)).find((t) => t.name === "Gentle master")!.id;
}

describe("studio templates", () => {
  it("seeds four templates once, however often the seed runs", async () => {
    expect(await seedTemplates(db, f.studioId)).toBe(0);
    expect((await listTemplates(f.studioId)).map((t) => t.name)).toEqual(["Gentle master", "Open and loud", "Quiet reference", "Warm and even"]);
  });

  it("has a gentle master: four bands at 90 Hz, 1 kHz, 3 kHz with ratios 1.2–2, an auto-release bus compressor and a -1 dBTP limiter", async () => {
    const [revision] = await listRevisions(await gentleId(f.studioId));
    const chain = revision.params as Chain;
    const multiband = chain.stages.find((s) => s.type === "multiband");
    expect(multiband?.type === "multiband" && multiband.crossoversHz).toEqual([90, 1000, 3000]);
    if (multiband?.type !== "multiband") throw new Error("no multiband stage");
    for (const band of multiband.bands) {
      expect(band.ratio).toBeGreaterThanOrEqual(1.2);
      expect(band.ratio).toBeLessThanOrEqual(2);
    }
    const bus = chain.stages.find((s) => s.type === "compress");
    expect(bus?.type === "compress" && bus.releaseMs).toBe("auto");
    const limit = chain.stages.find((s) => s.type === "limit");
    expect(limit?.type === "limit" && limit.ceilingDbtp).toBe(-1);
  });

  it("makes a template from another one on the templates page", async () => {
    const form = { name: "Late-night copy", templateId: await gentleId(f.studioId) };
    const result = await call(templatesPage.action, requestAs(f, "engineer", "/templates", { form }), {});
    expect(result).toBeInstanceOf(Response);
    const chainId = (result as Response).headers.get("Location")!.split("/").pop()!;
    const [copy] = await listRevisions(chainId);
    const [original] = await listRevisions(form.templateId);
    expect(copy.params).toEqual(original.params);
  });
});

describe("a track's chain", () => {
  let chainId: string;

  it("refuses another studio's template", async () => {
    const other = await seedTemplates(db, f.otherStudioId).then(() => gentleId(f.otherStudioId));
    const path = `/releases/${f.releaseId}/tracks/${f.trackId}/chains/new`;
    const result = dataOf<{ errors: Record<string, string> }>(
      await call(chainNew.action, requestAs(f, "engineer", path, { form: { name: "Borrowed", templateId: other } }), { releaseId: f.releaseId, trackId: f.trackId }),
    );
    expect(result.status).toBe(400);
    expect(result.body.errors.templateId).toBeTruthy();
    expect(await listTrackChains(f.trackId)).toHaveLength(0);
  });

  it("starts from the gentle template as revision 1", async () => {
    const path = `/releases/${f.releaseId}/tracks/${f.trackId}/chains/new`;
    const result = await call(chainNew.action, requestAs(f, "engineer", path, { form: { name: "Track chain", templateId: await gentleId(f.studioId) } }), {
      releaseId: f.releaseId,
      trackId: f.trackId,
    });
    expect((result as Response).status).toBe(302);
    chainId = (result as Response).headers.get("Location")!.split("/").pop()!;
    const revisions = await listRevisions(chainId);
    expect(revisions.map((r) => r.revision)).toEqual([1]);
    expect(revisions[0].authorId).toBe(f.users.engineer.id);
  });

  it("answers a value out of range with the error under the editor's path, and saves nothing", async () => {
    const [latest] = await listRevisions(chainId);
    const params = structuredClone(latest.params) as { stages: Record<string, unknown>[] };
    params.stages[1].ratio = 50;
    params.stages[2].crossoversHz = [1000, 90, 3000];
    const result = dataOf<{ errors: Record<string, string> }>(
      await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: { params: JSON.stringify(params) } }), { chainId }),
    );
    expect(result.status).toBe(400);
    expect(result.body.errors["stages[1].ratio"]).toBe("must be at most 20");
    expect(result.body.errors["stages[2].crossoversHz[1]"]).toBe("crossovers must be in ascending order");
    expect(await listRevisions(chainId)).toHaveLength(1);
  });

  it("saves a change as revision 2, leaves revision 1 as it was, and shows the change with units", async () => {
    const [first] = await listRevisions(chainId);
    const params = structuredClone(first.params) as { stages: Record<string, unknown>[] };
    params.stages[1].ratio = 2.4;
    (params.stages[2].bands as Record<string, unknown>[])[1].releaseMs = 180;
    const result = await call(chainPage.action, requestAs(f, "engineer", `/chains/${chainId}`, { form: { params: JSON.stringify(params) } }), { chainId });
    expect((result as Response).headers.get("Location")).toBe(`/chains/${chainId}?saved=2`);
    const revisions = await listRevisions(chainId);
    expect(revisions.map((r) => r.revision)).toEqual([2, 1]);
    expect(revisions[1].params).toEqual(first.params);

    const page = (await call(chainPage.loader, requestAs(f, "engineer", `/chains/${chainId}`), { chainId })) as Awaited<ReturnType<typeof chainPage.loader>>;
    expect(page.diff?.from).toBe(1);
    expect(page.diff?.to).toBe(2);
    expect(page.diff?.changes).toEqual([
      { path: "stages[1].ratio", change: "changed", before: 1.8, after: 2.4 },
      { path: "stages[2].bands[1].releaseMs", change: "changed", before: "auto", after: 180 },
    ]);
  });

  it("keeps revisions immutable in the database", async () => {
    const [latest] = await listRevisions(chainId);
    await expect(db("chain_revisions").where({ id: latest.id }).update({ params: JSON.stringify({ stages: [] }) })).rejects.toThrow(/immutable/);
  });

  it("answers 404 to a client and to another studio's engineer", async () => {
    for (const persona of ["client", "otherStudio"] as const) {
      const thrown = await call(chainPage.loader, requestAs(f, persona, `/chains/${chainId}`), { chainId }).catch((e: unknown) => e);
      expect((thrown as Response).status).toBe(404);
    }
  });
});

// The render form, the progress resource and cancelling, through the route
// modules on the real database and queue (no worker: the render stays queued).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/lib/queue.server.ts";
import { getRender } from "../../app/models/render.server.ts";
import { createChain, createRevision, type ChainRevision } from "../../app/models/chain.server.ts";
import * as renderNew from "../../app/routes/render-new.tsx";
import * as renderPage from "../../app/routes/render.tsx";
import * as renderProgress from "../../app/routes/render-progress.ts";
import { createFixture, destroyFixture, dataOf, requestAs, type Fixture } from "./fixtures.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import { gentleChain } from "../../harness/worker-harness.ts";

Object.assign(process.env, { TIDEMARK_QUEUE_NAMESPACE: "test-render-routes" });

let fixture: Fixture;
let stored: StoredRender;
let template: ChainRevision;

beforeAll(async () => {
  fixture = await createFixture();
  stored = await addStoredRender({ studioId: fixture.studioId, trackId: fixture.trackId });
  const chain = await createChain({ studioId: fixture.studioId, trackId: null, name: "Routes template" });
  template = await createRevision(chain.id, gentleChain(), null);
});
afterAll(async () => {
  await db("renders").where({ mix_id: stored.mixId }).delete();
  await stored?.cleanup();
  await destroyFixture(fixture);
  await stopQueue();
  await db.destroy();
});

const base = () => `/releases/${fixture.releaseId}/tracks/${fixture.trackId}`;
const trk = () => ({ releaseId: fixture.releaseId, trackId: fixture.trackId });

async function submit(form: Record<string, string>) {
  const request = requestAs(fixture, "engineer", `${base()}/renders/new`, { form });
  return Promise.resolve(renderNew.action({ request, params: trk(), context: {} } as never)).catch((e: unknown) => e);
}

describe("render form", () => {
  it("offers the studio's template at its latest revision", async () => {
    const data = (await renderNew.loader({ request: requestAs(fixture, "engineer", `${base()}/renders/new`), params: trk(), context: {} } as never)) as {
      chains: { revisionId: string; label: string }[];
      mixes: { id: string }[];
    };
    expect(data.chains).toContainEqual(expect.objectContaining({ revisionId: template.id, label: "Routes template · rev 1 (template)" }));
    expect(data.mixes.map((m) => m.id)).toEqual([stored.mixId]);
  });

  it("puts each error beside its field and keeps the values", async () => {
    const values = { mixId: stored.mixId, chainRevisionId: template.id, kind: "preview", region: "range", startS: "5", endS: "2", targetLufs: "-80" };
    const { status, body } = dataOf<{ errors: Record<string, string>; values: Record<string, string> }>(await submit(values));
    expect(status).toBe(400);
    expect(body.errors).toEqual({ endS: "The end comes after the start", targetLufs: "A target between −40 and −5 LUFS" });
    expect(body.values).toEqual(values);
  });

  it("refuses a chain revision that is not offered for this track", async () => {
    const other = await createChain({ studioId: fixture.otherStudioId, trackId: null, name: "Elsewhere" });
    const foreign = await createRevision(other.id, gentleChain(), null);
    const { status, body } = dataOf<{ errors: Record<string, string> }>(await submit({ mixId: stored.mixId, chainRevisionId: foreign.id, kind: "print" }));
    expect(status).toBe(400);
    expect(body.errors.chainRevisionId).toBe("Choose one of the chains listed");
  });

  it("creates a queued preview of a region with a target and goes to its page", async () => {
    const thrown = (await submit({ mixId: stored.mixId, chainRevisionId: template.id, kind: "preview", region: "range", startS: "0.005", endS: "1", targetLufs: "−14" })) as Response;
    expect(thrown.status).toBe(302);
    const renderId = thrown.headers.get("Location")!.match(/\/renders\/([0-9a-f-]{36})$/)![1];
    const render = (await getRender(renderId))!;
    expect(render).toMatchObject({ kind: "preview", state: "queued", targetLufs: -14, chainRevisionId: template.id });
    // The fixture's mix lasts 1000 frames at 48 kHz: the end is held to it.
    expect(render.region).toEqual({ startS: 0.005, endS: 1000 / 48_000 });
    expect(render.jobId).toMatch(/^[0-9a-f-]{36}$/);

    const params = { ...trk(), renderId };
    const progress = (await renderProgress.loader({ request: requestAs(fixture, "engineer", `${base()}/renders/${renderId}/progress`), params, context: {} } as never)) as Response;
    expect(await progress.json()).toEqual({ id: renderId, state: "queued", progress: 0, error: null, attempts: 0 });
    // Work in progress stays in the studio: the client sees a render only once it is sent for review.
    const clientProgress = await Promise.resolve(renderProgress.loader({ request: requestAs(fixture, "client", `${base()}/renders/${renderId}/progress`), params, context: {} } as never)).catch((e: unknown) => e);
    expect((clientProgress as Response).status).toBe(404);

    // Nor may a client cancel.
    const clientCancel = await Promise.resolve(
      renderPage.action({ request: requestAs(fixture, "client", `${base()}/renders/${renderId}`, { form: { intent: "cancel" } }), params, context: {} } as never),
    ).catch((e: unknown) => e);
    expect((clientCancel as Response).status).toBe(404);
    expect((await getRender(renderId))!.state).toBe("queued");

    const cancelled = await renderPage.action({ request: requestAs(fixture, "engineer", `${base()}/renders/${renderId}`, { form: { intent: "cancel" } }), params, context: {} } as never);
    expect(cancelled).toEqual({ cancelled: true });
    const after = (await renderProgress.loader({ request: requestAs(fixture, "engineer", `${base()}/renders/${renderId}/progress`), params, context: {} } as never)) as Response;
    expect((await after.json()).state).toBe("cancelled");
  });

  it("is a 404 for a render of another track", async () => {
    const params = { releaseId: fixture.otherReleaseId, trackId: fixture.trackId, renderId: stored.renderId };
    const thrown = await Promise.resolve(renderPage.loader({ request: requestAs(fixture, "owner", "/"), params, context: {} } as never)).catch((e: unknown) => e);
    expect((thrown as Response).status).toBe(404);
  });
});

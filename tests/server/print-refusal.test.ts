// A print of a chain whose resonance stage listens to "removed" is refused
// with a clear message, by the render form and the API; a preview of the
// same revision is queued. Real database and queue, no worker.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { createApiToken } from "../../app/models/api-token.server.ts";
import { createChain, createRevision, type ChainRevision } from "../../app/models/chain.server.ts";
import * as renderNew from "../../app/routes/render-new.tsx";
import * as renders from "../../app/routes/api.renders.ts";
import { createFixture, destroyFixture, dataOf, requestAs, type Fixture } from "./fixtures.ts";

Object.assign(process.env, { TIDEMARK_QUEUE_NAMESPACE: "test-print-refusal" });

let fixture: Fixture;
let mixId: string;
let removed: ChainRevision;
let token: string;

const listening = (listen: "output" | "removed") => ({
  stages: [
    { type: "tape", driveDb: 3, bumpHz: 70, bumpDb: 1, rolloffHz: null, blend: 0.5, oversample: 2 },
    { type: "resonance", lowHz: 1000, highHz: 8000, thresholdDb: 6, maxCutDb: 4, attackMs: 20, releaseMs: 150, blend: 1, listen },
  ],
  output: { bitDepth: 24, dither: "tpdf" },
});

beforeAll(async () => {
  fixture = await createFixture();
  const [mix] = await db("mixes")
    .insert({ track_id: fixture.trackId, version: 1, original_name: "refusal.wav", storage_key: `mixes/${fixture.trackId}/refusal.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 48000 * 10 })
    .returning("id");
  mixId = mix.id;
  const chain = await createChain({ studioId: fixture.studioId, trackId: null, name: "Hearing the cut" });
  removed = await createRevision(chain.id, listening("removed"), null);
  token = (await createApiToken({ userId: fixture.users.engineer.id, studioId: fixture.studioId, name: "refusal script" })).token;
});
afterAll(async () => {
  if (mixId) await db("renders").where({ mix_id: mixId }).delete();
  await destroyFixture(fixture);
  await stopQueue();
  await db.destroy();
});

const base = () => `/releases/${fixture.releaseId}/tracks/${fixture.trackId}`;

async function submit(form: Record<string, string>) {
  const request = requestAs(fixture, "engineer", `${base()}/renders/new`, { form });
  return Promise.resolve(renderNew.action({ request, params: { releaseId: fixture.releaseId, trackId: fixture.trackId }, context: {} } as never)).catch((e: unknown) => e);
}

async function api(body: unknown) {
  const request = new Request("http://tidemark.test/api/renders", { method: "POST", headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" }, body: JSON.stringify(body) });
  const response = await renders.action({ request, params: {}, context: {} } as never);
  return { status: response.status, body: await response.json() };
}

describe('prints of a resonance stage listening to "removed"', () => {
  it("the render form refuses the print beside the chain field, and queues a preview", async () => {
    const { status, body } = dataOf<{ errors: Record<string, string> }>(await submit({ mixId, chainRevisionId: removed.id, kind: "print" }));
    expect(status).toBe(400);
    expect(body.errors.chainRevisionId).toMatch(/^Stage 2 \(resonance\) listens to what it removes.*"output"/);
    expect(await db("renders").where({ mix_id: mixId, kind: "print" }).count("* as n").first()).toMatchObject({ n: "0" });
    const preview = (await submit({ mixId, chainRevisionId: removed.id, kind: "preview" })) as Response;
    expect(preview.status).toBe(302);
  });

  it("the API answers 400 with the message as the chain's field error, and queues a preview", async () => {
    const refused = await api({ mixId, chainRevisionId: removed.id, kind: "print" });
    expect(refused.status).toBe(400);
    expect(refused.body.fieldErrors.chainRevisionId).toMatch(/listens to what it removes/);
    expect((await api({ mixId, chainRevisionId: removed.id, kind: "preview" })).status).toBe(201);
  });

  it("a revision set back to output may be printed", async () => {
    const back = await createRevision(removed.chainId, listening("output"), null);
    expect((await api({ mixId, chainRevisionId: back.id, kind: "print" })).status).toBe(201);
  });
});

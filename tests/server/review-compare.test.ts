// The compare page's loader and action and the render audio route, called as
// React Router calls them, with a persona's session cookie. Rows of our own
// fixture studio only; stored files under our own keys, removed afterwards.
import { publicAppUrl } from "../../app/lib/billing/links.ts";
import { randomUUID } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { action, loader } from "../../app/routes/compare.tsx";
import { loader as audioLoader } from "../../app/routes/render-audio.tsx";
import { createFixture, dataOf, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let f: Fixture;
let mixId: string;
const keys: string[] = [];
const renders: Record<"preview" | "print", string> = { preview: "", print: "" };
const wavBytes = Uint8Array.from({ length: 4000 }, (_, i) => i % 251);

async function makeRender(kind: "preview" | "print", params: unknown, traces: unknown) {
  const [chain] = await db("chains").insert({ studio_id: f.studioId, track_id: f.trackId, name: `Chain ${kind}` }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify(params) }).returning("id");
  const id = randomUUID();
  const outputKey = `test-review/${id}/output.wav`;
  const tracesKey = `test-review/${id}/traces.json`;
  await storage().put(outputKey, wavBytes, { contentType: "audio/wav" });
  await storage().put(tracesKey, new TextEncoder().encode(JSON.stringify(traces)), { contentType: "application/json" });
  keys.push(outputKey, tracesKey);
  await db("renders").insert({
    id,
    mix_id: mixId,
    chain_revision_id: rev.id,
    kind,
    region_start_s: kind === "preview" ? 10 : null,
    region_end_s: kind === "preview" ? 12 : null,
    state: "done",
    progress: 1,
    finished_at: db.fn.now(),
    output_key: outputKey,
    traces_key: tracesKey,
    output_analysis: JSON.stringify({ integratedLufs: kind === "print" ? -9.5 : -11 }),
  });
  return id;
}

const path = (query = "") => `/releases/${f.releaseId}/tracks/${f.trackId}/compare${query}`;
const routeParams = () => ({ releaseId: f.releaseId, trackId: f.trackId });
const load = (persona: Persona, query = "") => loader({ request: requestAs(f, persona, path(query)), params: routeParams(), context: {} } as never);
const act = (persona: Persona, form: Record<string, string>) => action({ request: requestAs(f, persona, path(), { form }), params: routeParams(), context: {} } as never);
const audio = (persona: Persona, renderId: string, range?: string) => {
  const request = requestAs(f, persona, `/renders/${renderId}/audio`);
  if (range) request.headers.set("Range", range);
  return audioLoader({ request, params: { renderId }, context: {} } as never) as Promise<Response>;
};

beforeAll(async () => {
  f = await createFixture();
  const [mix] = await db("mixes")
    .insert({ track_id: f.trackId, version: 1, original_name: "shoreline.wav", storage_key: `test-review/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48_000, channels: 2, bit_depth: 24, sample_format: "int", frames: 48_000 * 20 })
    .returning("id");
  mixId = mix.id;
  // Print: 20 s; the limiter works hardest at 11.00 s. Preview of 10–12 s: the same moment is its own 1.00 s.
  const printGr = Array.from({ length: 2000 }, (_, j) => (j === 1100 ? 4 : 0.5));
  const previewGr = Array.from({ length: 200 }, (_, j) => (j === 100 ? 3 : 0.25));
  renders.print = await makeRender("print", { stages: [{ type: "limit", ceilingDbtp: -1 }] }, { gridMs: 10, stages: [{ index: 0, type: "limit", names: ["gr"], gainReductionDb: [printGr] }] });
  renders.preview = await makeRender("preview", { stages: [{ type: "limit", ceilingDbtp: -1.5 }] }, { gridMs: 10, stages: [{ index: 0, type: "limit", names: ["gr"], gainReductionDb: [previewGr] }] });
});

afterAll(async () => {
  if (f) {
    await db("outbox_emails").where({ studio_id: f.studioId }).delete();
    await db("renders").where({ mix_id: mixId }).delete();
  }
  await destroyFixture(f);
  for (const key of keys) await storage().delete(key);
  await db.destroy();
});

describe("compare page", () => {
  it("gives staff both renders level data, traces on one axis and the chain changes", async () => {
    const page = (await load("engineer", `?a=${renders.preview}&b=${renders.print}`)) as Awaited<ReturnType<typeof loader>>;
    expect(page.a).toMatchObject({ id: renders.preview, offsetS: 10, integratedLufs: -11 });
    expect(page.b).toMatchObject({ id: renders.print, offsetS: 0, integratedLufs: -9.5 });
    const rows = page.aligned!.rows;
    const peak = (key: string) => rows.reduce((best, r) => ((r[key] ?? -1) > (best[key] ?? -1) ? r : best)).timeS;
    expect(peak("A:s0:gr")).toBe(11);
    expect(peak("B:s0:gr")).toBe(11);
    expect(page.changes.map((c) => [c.label, c.beforeText, c.afterText])).toEqual([["Stage 1 · limit · ceilingDbtp", "-1 dBTP", "-1.5 dBTP"]]);
  });

  it("shows a client only renders sent to them, without traces, and lets them comment and give a verdict", async () => {
    expect(await outcomeOf(() => load("otherClient"))).toBe("404");
    expect(await outcomeOf(() => load("otherStudio"))).toBe("404");
    const before = (await load("client")) as Awaited<ReturnType<typeof loader>>;
    expect(before.choices).toEqual([]);
    expect(await outcomeOf(() => audio("client", renders.print))).toBe("404");

    // The client cannot send; the engineer can.
    expect(await outcomeOf(() => act("client", { intent: "send", renderId: renders.print }))).toBe("404");
    expect(await outcomeOf(() => act("engineer", { intent: "send", renderId: renders.print, message: "Full print for you" }))).toBe("allowed");
    const mail = await db("outbox_emails").where({ studio_id: f.studioId, kind: "review_request" }).first("text", "to_address");
    expect(mail.to_address).toBe(f.users.client.email);
    // The e-mailed link uses the public address, whatever host the request came in on.
    expect(mail.text).toContain(`${publicAppUrl()}${path(`?a=${renders.print}`)}`);

    const page = (await load("client")) as Awaited<ReturnType<typeof loader>>;
    expect(page.choices.map((c) => c.id)).toEqual([renders.print]);
    expect((await audio("client", renders.print)).status).toBe(200);
    expect(page.aligned).toBeNull();
    expect(page.review.status).toBe("sent");

    const bad = dataOf<{ error: string }>(await act("client", { intent: "comment", renderId: renders.print, time: "soon", body: "Hm" }));
    expect(bad.status).toBe(400);
    expect(await outcomeOf(() => act("client", { intent: "comment", renderId: renders.print, time: "0:11.5", body: "Love the lift here" }))).toBe("allowed");
    expect((await db("comments").where({ render_id: renders.print }).first("time_s")).time_s).toBe(11.5);
    // Not sent: the preview is not the client's to comment on.
    expect(await outcomeOf(() => act("client", { intent: "comment", renderId: renders.preview, time: "1", body: "?" }))).toBe("404");

    const empty = dataOf<{ error: string }>(await act("client", { intent: "changes", renderId: renders.print, note: " " }));
    expect(empty).toMatchObject({ status: 409, body: { error: "Say what should change." } });
    expect(await outcomeOf(() => act("client", { intent: "approve", renderId: renders.print }))).toBe("allowed");
    expect(((await load("client")) as Awaited<ReturnType<typeof loader>>).review.status).toBe("approved");
  });
});

describe("render audio", () => {
  it("serves the whole file and byte ranges to whoever may hear it", async () => {
    const whole = await audio("engineer", renders.preview);
    expect(whole.status).toBe(200);
    expect(whole.headers.get("Content-Type")).toBe("audio/wav");
    expect(new Uint8Array(await whole.arrayBuffer())).toEqual(wavBytes);
    const part = await audio("engineer", renders.preview, "bytes=100-199");
    expect(part.status).toBe(206);
    expect(part.headers.get("Content-Range")).toBe(`bytes 100-199/${wavBytes.length}`);
    expect(new Uint8Array(await part.arrayBuffer())).toEqual(wavBytes.slice(100, 200));
    expect(whole.headers.get("Accept-Ranges")).toBe("bytes");
    expect(whole.headers.get("Content-Length")).toBe(String(wavBytes.length));
    expect(part.headers.get("Content-Length")).toBe("100");
    // A suffix range: the last 100 bytes.
    const tail = await audio("engineer", renders.preview, "bytes=-100");
    expect(tail.status).toBe(206);
    expect(tail.headers.get("Content-Range")).toBe(`bytes ${wavBytes.length - 100}-${wavBytes.length - 1}/${wavBytes.length}`);
    expect(new Uint8Array(await tail.arrayBuffer())).toEqual(wavBytes.slice(-100));
    const beyond = await audio("engineer", renders.preview, "bytes=9000-");
    expect(beyond.status).toBe(416);
    expect(beyond.headers.get("Content-Range")).toBe(`bytes */${wavBytes.length}`);
    expect(await outcomeOf(() => audio("otherStudio", renders.preview))).toBe("404");
    expect(await outcomeOf(() => audio("signedOut", renders.preview))).toBe("sign-in");
  });
});

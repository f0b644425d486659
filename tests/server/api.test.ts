// The JSON API against the real database: every route without a token, with
// a token (staff, client, another studio's), with bad JSON, and what it
// creates. Handlers are called directly with the request a client would send.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { stopQueue } from "../../app/lib/queue.server.ts";
import { createApiToken, revokeApiToken } from "../../app/models/api-token.server.ts";
import { listRevisions, listTemplates } from "../../app/models/chain.server.ts";
import { seedTemplates } from "../../db/seeds/02_templates.ts";
import * as releases from "../../app/routes/api.releases.ts";
import * as releaseTracks from "../../app/routes/api.release-tracks.ts";
import * as chains from "../../app/routes/api.chains.ts";
import * as chainOne from "../../app/routes/api.chain.ts";
import * as chainRevisions from "../../app/routes/api.chain-revisions.ts";
import * as renders from "../../app/routes/api.renders.ts";
import * as renderOne from "../../app/routes/api.render.ts";
import * as renderCancel from "../../app/routes/api.render-cancel.ts";
import * as renderTraces from "../../app/routes/api.render-traces.ts";
import * as notFoundRoute from "../../app/routes/api.not-found.ts";
import * as trackMixes from "../../app/routes/api.track-mixes.ts";
import * as mixAudio from "../../app/routes/api.mix-audio.ts";
import * as renderAudio from "../../app/routes/api.render-audio.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";

process.env.TIDEMARK_QUEUE_NAMESPACE = "test-api";

type Who = "none" | "engineer" | "client" | "otherClient" | "otherStudio";
let f: Fixture;
const tokens = {} as Record<Exclude<Who, "none">, string>;
let gentleId: string;
let mixId: string;

beforeAll(async () => {
  f = await createFixture();
  for (const who of ["engineer", "client", "otherClient", "otherStudio"] as const) {
    const studioId = who === "otherStudio" ? f.otherStudioId : f.studioId;
    tokens[who] = (await createApiToken({ userId: f.users[who].id, studioId, name: `${who} script` })).token;
  }
  await seedTemplates(db, f.studioId);
  gentleId = (await listTemplates(f.studioId)).find((t) => t.name === "Gentle master")!.id;
  const [mix] = await db("mixes")
    .insert({ track_id: f.trackId, version: 1, original_name: "api-mix.wav", storage_key: `mixes/${f.trackId}/api-test.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 48000 * 10 })
    .returning("id");
  mixId = mix.id;
});
afterAll(async () => {
  // Renders hold their chain revision (NO ACTION), so they go before the studio's cascade.
  if (mixId) await db("renders").where({ mix_id: mixId }).delete();
  await destroyFixture(f);
  await stopQueue();
});

type Handler = (args: { request: Request; params: Record<string, string>; context: unknown }) => Promise<Response>;

async function call(handler: unknown, who: Who, path: string, init: { method?: string; body?: unknown; raw?: string; params?: Record<string, string> } = {}) {
  const headers = new Headers();
  if (who !== "none") headers.set("Authorization", `Bearer ${tokens[who]}`);
  const method = init.method ?? (init.body !== undefined || init.raw !== undefined ? "POST" : "GET");
  let body: string | undefined;
  if (init.raw !== undefined || init.body !== undefined) {
    headers.set("Content-Type", "application/json");
    body = init.raw ?? JSON.stringify(init.body);
  }
  const response = await (handler as Handler)({ request: new Request(`http://tidemark.test${path}`, { method, headers, body }), params: init.params ?? {}, context: {} });
  const text = await response.text();
  return { status: response.status, body: text ? JSON.parse(text) : null, headers: response.headers };
}

describe("tokens", () => {
  it("answers 401 in JSON without a token, with an unknown one, and after revoking", async () => {
    expect(await call(releases.loader, "none", "/api/releases")).toMatchObject({ status: 401, body: { error: expect.any(String) } });
    const bogus = await (releases.loader as Handler)({ request: new Request("http://tidemark.test/api/releases", { headers: { Authorization: "Bearer tdm_nope" } }), params: {}, context: {} });
    expect(bogus.status).toBe(401);
    const { token, apiToken } = await createApiToken({ userId: f.users.engineer.id, studioId: f.studioId, name: "short-lived" });
    const ok = await (releases.loader as Handler)({ request: new Request("http://tidemark.test/api/releases", { headers: { Authorization: `Bearer ${token}` } }), params: {}, context: {} });
    expect(ok.status).toBe(200);
    expect(await revokeApiToken(f.users.engineer.id, f.studioId, apiToken.id)).toBe(true);
    const after = await (releases.loader as Handler)({ request: new Request("http://tidemark.test/api/releases", { headers: { Authorization: `Bearer ${token}` } }), params: {}, context: {} });
    expect(after.status).toBe(401);
  });

  it("stores only a SHA-256 of the token and notes when it was used", async () => {
    expect((await call(releases.loader, "engineer", "/api/releases")).status).toBe(200);
    const rows = await db("api_tokens").where({ user_id: f.users.engineer.id, name: "engineer script" }).select("token_hash", "last_used_at");
    expect(rows).toHaveLength(1);
    expect(rows[0].token_hash).toMatch(/^[0-9a-f]{64}$/);
    expect(rows[0].token_hash).not.toContain(tokens.engineer.slice(4, 20));
    expect(rows[0].last_used_at).not.toBeNull();
  });

  it("accepts the session cookie instead of a token", async () => {
    const response = await (releases.loader as Handler)({ request: new Request("http://tidemark.test/api/releases", { headers: { Cookie: f.users.owner.cookie } }), params: {}, context: {} });
    expect(response.status).toBe(200);
  });
});

describe("releases and tracks", () => {
  it("lists the releases each caller may see", async () => {
    const ids = async (who: Who) => ((await call(releases.loader, who, "/api/releases")).body.releases as { id: string }[]).map((r) => r.id).sort();
    expect(await ids("engineer")).toEqual([f.releaseId, f.otherReleaseId].sort());
    expect(await ids("client")).toEqual([f.releaseId]);
    expect(await ids("otherStudio")).not.toContain(f.releaseId);
  });

  it("creates a release for staff; bad JSON and bad fields are 400 with field errors; a client gets 404", async () => {
    expect(await call(releases.action, "engineer", "/api/releases", { raw: "{title:" })).toMatchObject({ status: 400, body: { fieldErrors: { body: expect.any(String) } } });
    const bad = await call(releases.action, "engineer", "/api/releases", { body: { title: "", kind: "box set", clientId: f.clientId, colour: "teal" } });
    expect(bad.status).toBe(400);
    // The unknown field is named at the body's level.
    expect(Object.keys(bad.body.fieldErrors).sort()).toEqual(["body", "kind", "title"]);
    expect(bad.body.fieldErrors.body).toContain("colour");
    const wrongClient = await call(releases.action, "otherStudio", "/api/releases", { body: { title: "Borrowed", kind: "single", clientId: f.clientId } });
    expect(wrongClient).toMatchObject({ status: 400, body: { fieldErrors: { clientId: expect.any(String) } } });
    expect((await call(releases.action, "client", "/api/releases", { body: { title: "Mine", kind: "single", clientId: f.clientId } })).status).toBe(404);
    expect((await call(releases.action, "none", "/api/releases", { body: { title: "Mine", kind: "single", clientId: f.clientId } })).status).toBe(401);
    const created = await call(releases.action, "engineer", "/api/releases", { body: { title: "Harbour Lights", kind: "album", clientId: f.clientId, dueOn: "2027-05-01" } });
    expect(created.status).toBe(201);
    expect(created.body.release).toMatchObject({ title: "Harbour Lights", kind: "album", status: "intake", dueOn: "2027-05-01" });
  });

  it("lists and creates tracks with the release's access rules", async () => {
    const path = `/api/releases/${f.releaseId}/tracks`;
    const params = { releaseId: f.releaseId };
    expect((await call(releaseTracks.loader, "client", path, { params })).body.tracks.map((t: { id: string }) => t.id)).toEqual([f.trackId]);
    expect((await call(releaseTracks.loader, "otherClient", path, { params })).status).toBe(404);
    expect((await call(releaseTracks.loader, "otherStudio", path, { params })).status).toBe(404);
    expect((await call(releaseTracks.loader, "none", path, { params })).status).toBe(401);
    expect((await call(releaseTracks.loader, "engineer", "/api/releases/x/tracks", { params: { releaseId: "not-a-uuid" } })).status).toBe(404);
    expect((await call(releaseTracks.action, "client", path, { params, body: { title: "Extra" } })).status).toBe(404);
    expect((await call(releaseTracks.action, "otherStudio", path, { params, body: { title: "Extra" } })).status).toBe(404);
    expect(await call(releaseTracks.action, "engineer", path, { params, raw: "" })).toMatchObject({ status: 400, body: { fieldErrors: { body: expect.any(String) } } });
    expect(await call(releaseTracks.action, "engineer", path, { params, body: { title: "Dup", position: 1 } })).toMatchObject({ status: 400, body: { fieldErrors: { position: expect.stringContaining("taken") } } });
    expect(await call(releaseTracks.action, "engineer", path, { params, body: { title: "Bad", isrc: "nope" } })).toMatchObject({ status: 400, body: { fieldErrors: { isrc: expect.any(String) } } });
    const created = await call(releaseTracks.action, "engineer", path, { params, body: { title: "Second Light", isrc: "ZZ-TDM-27-00042" } });
    expect(created).toMatchObject({ status: 201, body: { track: { title: "Second Light", position: 2, isrc: "ZZTDM2700042" } } });
  });
});

describe("chains and revisions", () => {
  let chainId: string;

  it("creates a track chain from a template; another studio's token gets 404", async () => {
    expect((await call(chains.action, "otherStudio", "/api/chains", { body: { name: "Theirs", trackId: f.trackId, templateId: gentleId } })).status).toBe(404);
    expect((await call(chains.action, "client", "/api/chains", { body: { name: "Mine", trackId: f.trackId, templateId: gentleId } })).status).toBe(404);
    expect((await call(chains.action, "none", "/api/chains", { body: { name: "Mine", trackId: f.trackId } })).status).toBe(401);
    expect(await call(chains.action, "engineer", "/api/chains", { raw: "[" })).toMatchObject({ status: 400, body: { fieldErrors: { body: expect.any(String) } } });
    const created = await call(chains.action, "engineer", "/api/chains", { body: { name: "API chain", trackId: f.trackId, templateId: gentleId } });
    expect(created.status).toBe(201);
    chainId = created.body.chain.id;
    expect(created.body.revision.revision).toBe(1);
    expect(created.body.revision.params).toEqual((await listRevisions(gentleId))[0].params);
    const listed = await call(chains.loader, "engineer", `/api/chains?trackId=${f.trackId}`);
    expect(listed.body.chains.map((c: { id: string }) => c.id)).toEqual([chainId]);
    expect((await call(chains.loader, "otherStudio", `/api/chains?trackId=${f.trackId}`)).status).toBe(404);
  });

  it("answers invalid parameters with field errors under params.", async () => {
    const result = await call(chains.action, "engineer", "/api/chains", { body: { name: "Broken", params: { stages: [{ type: "compress", ratio: 0.5 }] } } });
    expect(result.status).toBe(400);
    expect(result.body.fieldErrors["params.stages[0].ratio"]).toBe("must be at least 1");
  });

  it("reads a chain only for its studio's staff", async () => {
    const params = { chainId };
    expect((await call(chainOne.loader, "engineer", `/api/chains/${chainId}`, { params })).body.latestRevision.revision).toBe(1);
    for (const who of ["client", "otherStudio"] as const) expect((await call(chainOne.loader, who, `/api/chains/${chainId}`, { params })).status).toBe(404);
    expect((await call(chainOne.loader, "none", `/api/chains/${chainId}`, { params })).status).toBe(401);
  });

  it("adds a revision, keeps the first, and diffs the two", async () => {
    const params = { chainId };
    const path = `/api/chains/${chainId}/revisions`;
    const [first] = await listRevisions(chainId);
    const next = structuredClone(first.params) as { stages: Record<string, unknown>[] };
    next.stages[3].ceilingDbtp = -1.5;
    expect((await call(chainRevisions.action, "otherStudio", path, { params, body: { params: next } })).status).toBe(404);
    expect((await call(chainRevisions.action, "client", path, { params, body: { params: next } })).status).toBe(404);
    expect(await call(chainRevisions.action, "engineer", path, { params, raw: "not json" })).toMatchObject({ status: 400, body: { fieldErrors: { body: expect.any(String) } } });
    expect(await call(chainRevisions.action, "engineer", path, { params, body: {} })).toMatchObject({ status: 400, body: { fieldErrors: { params: "is required" } } });
    const tooHot = structuredClone(next);
    tooHot.stages[3].ceilingDbtp = 3;
    expect(await call(chainRevisions.action, "engineer", path, { params, body: { params: tooHot } })).toMatchObject({ status: 400, body: { fieldErrors: { "params.stages[3].ceilingDbtp": "must be at most 0" } } });
    const saved = await call(chainRevisions.action, "engineer", path, { params, body: { params: next } });
    expect(saved.status).toBe(201);
    expect(saved.body.revision.revision).toBe(2);
    const list = await call(chainRevisions.loader, "engineer", path, { params });
    expect(list.body.revisions.map((r: { revision: number }) => r.revision)).toEqual([2, 1]);
    expect(list.body.revisions[1].params).toEqual(first.params);
    const diff = await call(chainRevisions.loader, "engineer", `${path}?from=1&to=2`, { params });
    expect(diff.body.changes).toEqual([{ path: "stages[3].ceilingDbtp", change: "changed", before: -1, after: -1.5 }]);
    expect((await call(chainRevisions.loader, "engineer", `${path}?from=1&to=9`, { params })).body.fieldErrors).toEqual({ to: "no such revision" });
  });
});

describe("renders", () => {
  let renderId: string;
  let revisionId: string;

  it("queues a render for staff, with field errors for what does not fit", async () => {
    revisionId = (await listRevisions(gentleId))[0].id;
    const body = { mixId, chainRevisionId: revisionId, kind: "preview", region: { startS: 1, endS: 6 } };
    expect((await call(renders.action, "client", "/api/renders", { body })).status).toBe(404);
    expect((await call(renders.action, "none", "/api/renders", { body })).status).toBe(401);
    expect(await call(renders.action, "otherStudio", "/api/renders", { body })).toMatchObject({ status: 400, body: { fieldErrors: { mixId: expect.any(String) } } });
    expect(await call(renders.action, "engineer", "/api/renders", { raw: "{" })).toMatchObject({ status: 400, body: { fieldErrors: { body: expect.any(String) } } });
    expect(await call(renders.action, "engineer", "/api/renders", { body: { ...body, kind: "print" } })).toMatchObject({ status: 400, body: { fieldErrors: { region: expect.any(String) } } });
    expect(await call(renders.action, "engineer", "/api/renders", { body: { ...body, region: { startS: 1, endS: 60 } } })).toMatchObject({ status: 400, body: { fieldErrors: { "region.endS": expect.any(String) } } });
    const created = await call(renders.action, "engineer", "/api/renders", { body });
    expect(created.status).toBe(201);
    renderId = created.body.render.id;
    expect(created.body.render).toMatchObject({ kind: "preview", region: { startS: 1, endS: 6 }, chainRevisionId: revisionId });
    expect(created.body.render).not.toHaveProperty("tracesKey");
    expect(created.body.render).not.toHaveProperty("jobId");
  });

  it("lists and reads renders for the studio; a client sees none until one is sent for review", async () => {
    expect((await call(renders.loader, "engineer", `/api/renders?trackId=${f.trackId}`)).body.renders.map((r: { id: string }) => r.id)).toEqual([renderId]);
    expect((await call(renders.loader, "client", `/api/renders?trackId=${f.trackId}`)).body.renders).toEqual([]);
    expect((await call(renders.loader, "otherStudio", `/api/renders?trackId=${f.trackId}`)).status).toBe(404);
    expect((await call(renders.loader, "otherClient", `/api/renders?trackId=${f.trackId}`)).status).toBe(404);
    expect((await call(renders.loader, "engineer", "/api/renders")).body.fieldErrors).toHaveProperty("trackId");
    const params = { renderId };
    expect((await call(renderOne.loader, "engineer", `/api/renders/${renderId}`, { params })).body.render.id).toBe(renderId);
    // Work in progress stays in the studio: a queued render is a 404 to the client, like one that does not exist.
    expect((await call(renderOne.loader, "client", `/api/renders/${renderId}`, { params })).status).toBe(404);
    expect((await call(renderOne.loader, "otherStudio", `/api/renders/${renderId}`, { params })).status).toBe(404);
    expect((await call(renderOne.loader, "none", `/api/renders/${renderId}`, { params })).status).toBe(401);
  });

  it("cancels for staff only, and has no traces until done", async () => {
    const params = { renderId };
    expect((await call(renderCancel.action, "client", `/api/renders/${renderId}/cancel`, { params, method: "POST" })).status).toBe(404);
    expect((await call(renderCancel.action, "otherStudio", `/api/renders/${renderId}/cancel`, { params, method: "POST" })).status).toBe(404);
    const cancelled = await call(renderCancel.action, "engineer", `/api/renders/${renderId}/cancel`, { params, method: "POST" });
    expect(cancelled.body.render.state).toBe("cancelled");
    expect((await call(renderTraces.loader, "engineer", `/api/renders/${renderId}/traces`, { params })).status).toBe(409);
  });

  it("serves a finished render's stored traces", async () => {
    const key = `renders/${f.trackId}/api-test-traces.json`;
    const traces = { frameMs: 10, stages: [], shortTermLufs: [-14.2, -13.9] };
    await storage().put(key, Buffer.from(JSON.stringify(traces)), { contentType: "application/json" });
    const [row] = await db("renders")
      .insert({ mix_id: mixId, chain_revision_id: revisionId, kind: "print", state: "done", progress: 1, output_key: `renders/${f.trackId}/api-test.wav`, traces_key: key, finished_at: db.fn.now() })
      .returning("id");
    const params = { renderId: row.id };
    expect(await call(renderTraces.loader, "engineer", `/api/renders/${row.id}/traces`, { params })).toMatchObject({ status: 200, body: traces });
    expect((await call(renderTraces.loader, "client", `/api/renders/${row.id}/traces`, { params })).status).toBe(404);
    // Sent for review, the render is the client's to see: its JSON, its traces, and in the list.
    await db("review_requests").insert({ track_id: f.trackId, render_id: row.id, sent_by: f.users.engineer.id });
    expect(await call(renderTraces.loader, "client", `/api/renders/${row.id}/traces`, { params })).toMatchObject({ status: 200, body: traces });
    expect((await call(renderOne.loader, "client", `/api/renders/${row.id}`, { params })).body.render.id).toBe(row.id);
    expect((await call(renders.loader, "client", `/api/renders?trackId=${f.trackId}`)).body.renders.map((r: { id: string }) => r.id)).toEqual([row.id]);
    expect((await call(renderTraces.loader, "otherStudio", `/api/renders/${row.id}/traces`, { params })).status).toBe(404);
    expect((await call(renderTraces.loader, "none", `/api/renders/${row.id}/traces`, { params })).status).toBe(401);
    await storage().delete(key);
  });

  it("answers unknown API paths with a JSON 404", async () => {
    expect(await call(notFoundRoute.loader, "engineer", "/api/nothing-here")).toMatchObject({ status: 404, body: { error: "Not found" } });
  });
});

/** A canonical 16-bit PCM WAV (RIFF header as in the WAVE format description), stereo 48 kHz, a 1 kHz tone. */
function toneWav(frames: number): Uint8Array {
  const data = Buffer.alloc(frames * 4);
  for (let i = 0; i < frames; i++) {
    const v = Math.round(8000 * Math.sin((2 * Math.PI * 1000 * i) / 48000));
    data.writeInt16LE(v, i * 4);
    data.writeInt16LE(v, i * 4 + 2);
  }
  const header = Buffer.alloc(44);
  header.write("RIFF", 0, "ascii");
  header.writeUInt32LE(36 + data.length, 4);
  header.write("WAVEfmt ", 8, "ascii");
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20);
  header.writeUInt16LE(2, 22);
  header.writeUInt32LE(48000, 24);
  header.writeUInt32LE(48000 * 4, 28);
  header.writeUInt16LE(4, 32);
  header.writeUInt16LE(16, 34);
  header.write("data", 36, "ascii");
  header.writeUInt32LE(data.length, 40);
  return new Uint8Array(Buffer.concat([header, data]));
}

describe("mixes and audio", () => {
  let stored: StoredRender;
  beforeAll(async () => {
    stored = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
  });
  afterAll(async () => stored?.cleanup());

  const upload = (who: Who, bytes: Uint8Array, name = "api-upload.wav") => {
    const headers = new Headers({ "Content-Type": "audio/wav", "X-File-Name": name, "Content-Length": String(bytes.length) });
    if (who !== "none") headers.set("Authorization", `Bearer ${tokens[who]}`);
    const request = new Request(`http://tidemark.test/api/tracks/${f.trackId}/mixes`, { method: "POST", headers, body: bytes as BodyInit });
    return (trackMixes.action as Handler)({ request, params: { trackId: f.trackId }, context: {} });
  };

  it("uploads a WAV as the next mix version for staff; refuses other files with a reason", async () => {
    expect((await upload("none", toneWav(4800))).status).toBe(401);
    expect((await upload("client", toneWav(4800))).status).toBe(404);
    expect((await upload("otherStudio", toneWav(4800))).status).toBe(404);
    const refused = await upload("engineer", new TextEncoder().encode("not a wave file at all"));
    expect(refused.status).toBe(422);
    expect(await refused.json()).toMatchObject({ error: expect.stringContaining("refused"), fieldErrors: { file: expect.any(String) } });
    const created = await upload("engineer", toneWav(4800));
    expect(created.status).toBe(201);
    const { mix } = await created.json();
    expect(mix).toMatchObject({ originalName: "api-upload.wav", sampleRateHz: 48000, channels: 2, bitDepth: 16, frames: 4800 });
    expect(mix).not.toHaveProperty("storageKey");
    const list = await call(trackMixes.loader, "engineer", `/api/tracks/${f.trackId}/mixes`, { params: { trackId: f.trackId } });
    expect(list.body.mixes[0].id).toBe(mix.id);
    expect((await call(trackMixes.loader, "client", `/api/tracks/${f.trackId}/mixes`, { params: { trackId: f.trackId } })).status).toBe(404);
    const row = await db("mixes").where({ id: mix.id }).first("storage_key");
    await storage().delete(row.storage_key);
  });

  it("downloads a render's audio with byte ranges: staff always, the client a sent print once the invoice is paid", async () => {
    const get = (who: Who, range?: string) => {
      const headers = new Headers();
      if (who !== "none") headers.set("Authorization", `Bearer ${tokens[who]}`);
      if (range) headers.set("Range", range);
      return (renderAudio.loader as Handler)({ request: new Request(`http://tidemark.test/api/renders/${stored.renderId}/audio`, { headers }), params: { renderId: stored.renderId }, context: {} });
    };
    const whole = await get("engineer");
    expect(whole.status).toBe(200);
    expect(Buffer.from(await whole.arrayBuffer()).equals(stored.outputBytes)).toBe(true);
    const part = await get("engineer", "bytes=100-199");
    expect(part.status).toBe(206);
    expect(Buffer.from(await part.arrayBuffer()).equals(stored.outputBytes.subarray(100, 200))).toBe(true);
    expect((await get("otherStudio")).status).toBe(404);
    expect((await get("otherClient")).status).toBe(404);
    expect((await get("none")).status).toBe(401);
    // Not sent for review: not the client's.
    expect((await get("client")).status).toBe(404);
    await db("review_requests").insert({ track_id: f.trackId, render_id: stored.renderId, sent_by: f.users.engineer.id });
    const locked = await get("client");
    expect(locked.status).toBe(403);
    expect(await locked.json()).toEqual({ error: "The final files unlock once the invoice is paid." });
    await db("invoices").insert({ studio_id: f.studioId, release_id: f.releaseId, number: `A-${f.tag}`, currency: "EUR", state: "paid", total_cents: 100, sent_at: db.fn.now(), paid_at: db.fn.now() });
    const paid = await get("client");
    expect(paid.status).toBe(200);
    expect(Buffer.from(await paid.arrayBuffer()).equals(stored.outputBytes)).toBe(true);
  });

  it("downloads a mix's original for staff only", async () => {
    const get = (who: Who) => {
      const headers = new Headers(who === "none" ? {} : { Authorization: `Bearer ${tokens[who]}` });
      return (mixAudio.loader as Handler)({ request: new Request(`http://tidemark.test/api/mixes/${stored.mixId}/audio`, { headers }), params: { mixId: stored.mixId }, context: {} });
    };
    const ok = await get("engineer");
    expect(ok.status).toBe(200);
    expect(Buffer.from(await ok.arrayBuffer()).equals(stored.mixBytes)).toBe(true);
    expect((await get("client")).status).toBe(404);
    expect((await get("otherStudio")).status).toBe(404);
    expect((await get("none")).status).toBe(401);
  });
});

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
import { loader as reviewLoader } from "../../app/routes/review-room.tsx";
import { createFixture, dataOf, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let f: Fixture;
let mixId: string;
let mix2Id: string;
const keys: string[] = [];
const renders: Record<"preview" | "print", string> = { preview: "", print: "" };
// A small but real WAV (16-bit stereo 48 kHz): an unpaid print reaches a client as a stretch cut from its header.
const wavBytes = (() => {
  const data = Uint8Array.from({ length: 4000 }, (_, i) => i % 251);
  const out = new Uint8Array(44 + data.length);
  const v = new DataView(out.buffer);
  out.set([0x52, 0x49, 0x46, 0x46], 0);
  v.setUint32(4, 36 + data.length, true);
  out.set([0x57, 0x41, 0x56, 0x45, 0x66, 0x6d, 0x74, 0x20], 8);
  v.setUint32(16, 16, true);
  v.setUint16(20, 1, true);
  v.setUint16(22, 2, true);
  v.setUint32(24, 48_000, true);
  v.setUint32(28, 48_000 * 4, true);
  v.setUint16(32, 4, true);
  v.setUint16(34, 16, true);
  out.set([0x64, 0x61, 0x74, 0x61], 36);
  v.setUint32(40, data.length, true);
  out.set(data, 44);
  return out;
})();

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
const room = (persona: Persona, query = "") =>
  reviewLoader({ request: requestAs(f, persona, `/releases/${f.releaseId}/room?track=${f.trackId}${query}`), params: { releaseId: f.releaseId }, context: {} } as never) as Promise<Awaited<ReturnType<typeof reviewLoader>>>;
/** Where a page sent the viewer (a thrown redirect), or null. */
const redirectedTo = (run: () => Promise<unknown>) => run().then(() => null, (r: unknown) => (r instanceof Response ? r.headers.get("Location") : Promise.reject(r)));
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
  // The mix's analysis, as the worker leaves it: figures and a short-term curve on a 10 ms grid (null where silent).
  const mixCurve = Array.from({ length: 2000 }, (_, j) => (j < 5 ? null : -18));
  await db("mixes")
    .where({ id: mixId })
    .update({ analysis_state: "done", analysis: JSON.stringify({ integratedLufs: -18, loudnessRangeLu: 6, truePeakDbtp: -3, samplePeakDbfs: -3.2, maxShortTermLufs: -15, maxMomentaryLufs: -13, correlation: 0.8, gridMs: 10, shortTermLufs: mixCurve }) });
  const [mix2] = await db("mixes")
    .insert({ track_id: f.trackId, version: 2, original_name: "shoreline-v2.wav", storage_key: `test-review/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48_000, channels: 2, bit_depth: 24, sample_format: "int", frames: 48_000 * 20 })
    .returning("id");
  mix2Id = mix2.id;
  // Print: 20 s; the limiter works hardest at 11.00 s. Preview of 10–12 s: the same moment is its own 1.00 s.
  const printGr = Array.from({ length: 2000 }, (_, j) => (j === 1100 ? 4 : 0.5));
  const previewGr = Array.from({ length: 200 }, (_, j) => (j === 100 ? 3 : 0.25));
  renders.print = await makeRender("print", { stages: [{ type: "limit", ceilingDbtp: -1 }] }, { gridMs: 10, stages: [{ index: 0, type: "limit", names: ["gr"], gainReductionDb: [printGr] }] });
  renders.preview = await makeRender("preview", { stages: [{ type: "limit", ceilingDbtp: -1.5 }] }, { gridMs: 10, stages: [{ index: 0, type: "limit", names: ["gr"], gainReductionDb: [previewGr] }] });
});

afterAll(async () => {
  if (f) {
    await db("outbox_emails").where({ studio_id: f.studioId }).delete();
    await db("comments").where({ track_id: f.trackId }).delete();
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
    expect(page.changes!.map((c) => [c.label, c.beforeText, c.afterText])).toEqual([["Stage 1 · limit · ceilingDbtp", "-1 dBTP", "-1.5 dBTP"]]);
    // The shared span only: the preview's region.
    expect([page.aligned!.startS, page.aligned!.endS]).toEqual([10, 12]);
  });

  it("zooms the traces to a region at the full grid's detail, and ignores a zoom that is not one", async () => {
    const zoomed = (await load("engineer", `?a=${renders.preview}&b=${renders.print}&zoom=10.50-11.50`)) as Awaited<ReturnType<typeof loader>>;
    expect(zoomed.aligned).toMatchObject({ zoomed: true, startS: 10.5, endS: 11.5, gridMs: 10 });
    expect(zoomed.aligned!.rows).toHaveLength(100);
    expect(zoomed.aligned!.rows.every((r) => r.timeS >= 10.5 && r.timeS < 11.5)).toBe(true);
    expect(zoomed.aligned!.rows.find((r) => r["B:s0:gr"] === 4)?.timeS).toBe(11);
    // Clamped to what both cover.
    const wide = (await load("engineer", `?a=${renders.preview}&b=${renders.print}&zoom=5-11`)) as Awaited<ReturnType<typeof loader>>;
    expect([wide.aligned!.startS, wide.aligned!.endS]).toEqual([10, 11]);
    for (const bad of ["11-10", "x", "10-10.01"]) {
      const page = (await load("engineer", `?a=${renders.preview}&b=${renders.print}&zoom=${bad}`)) as Awaited<ReturnType<typeof loader>>;
      expect(page.aligned!.zoomed).toBeUndefined();
    }
  });

  it("sends a client to the review room, which shows only renders sent to them; they comment and give a verdict here too", async () => {
    expect(await outcomeOf(() => load("otherClient"))).toBe("404");
    expect(await outcomeOf(() => load("otherStudio"))).toBe("404");
    // The compare page is the studio's: a client is sent to the room, which always plays.
    expect(await redirectedTo(() => load("client"))).toBe(`/releases/${f.releaseId}/room?track=${f.trackId}`);
    const before = await room("client");
    expect(before.tracks).toEqual([]);
    expect(await outcomeOf(() => audio("client", renders.print))).toBe("404");

    // The client cannot send; the engineer can.
    expect(await outcomeOf(() => act("client", { intent: "send", renderId: renders.print }))).toBe("404");
    expect(await outcomeOf(() => act("engineer", { intent: "send", renderId: renders.print, message: "Full print for you" }))).toBe("allowed");
    const mail = await db("outbox_emails").where({ studio_id: f.studioId, kind: "review_request" }).first("text", "to_address");
    expect(mail.to_address).toBe(f.users.client.email);
    // The e-mailed link uses the public address, whatever host the request came in on.
    expect(mail.text).toContain(`${publicAppUrl()}/releases/${f.releaseId}/room?track=${f.trackId}&render=${renders.print}`);

    const page = await room("client");
    expect(page.selected?.versions.map((v) => v.renderId)).toEqual([renders.print]);
    expect((await audio("client", renders.print)).status).toBe(200);
    expect(page.selected?.review.status).toBe("sent");

    const bad = dataOf<{ error: string }>(await act("client", { intent: "comment", renderId: renders.print, time: "soon", body: "Hm" }));
    expect(bad.status).toBe(400);
    expect(await outcomeOf(() => act("client", { intent: "comment", renderId: renders.print, time: "0:11.5", body: "Love the lift here" }))).toBe("allowed");
    expect((await db("comments").where({ render_id: renders.print }).first("time_s")).time_s).toBe(11.5);
    // Not sent: the preview is not the client's to comment on.
    expect(await outcomeOf(() => act("client", { intent: "comment", renderId: renders.preview, time: "1", body: "?" }))).toBe("404");

    const empty = dataOf<{ error: string }>(await act("client", { intent: "changes", renderId: renders.print, note: " " }));
    expect(empty).toMatchObject({ status: 409, body: { error: "Say what should change." } });
    expect(await outcomeOf(() => act("client", { intent: "approve", renderId: renders.print }))).toBe("allowed");
    expect((await room("client")).selected?.review.status).toBe("approved");
  });
});

describe("compare page with mixes", () => {
  it("lists a track's mixes for staff beside the renders, and pairs the newest render with its own mix by default", async () => {
    const page = (await load("engineer")) as Awaited<ReturnType<typeof loader>>;
    expect(page.choices.map((c) => c.key)).toEqual([`render:${renders.preview}`, `render:${renders.print}`, `mix:${mix2Id}`, `mix:${mixId}`]);
    expect(page.a?.key).toBe(`render:${renders.preview}`);
    expect(page.a?.label).toBe("Preview 0:10.0–0:12.0 · mix v1 · Chain preview r1");
    expect(page.b?.label).toBe("Mix v1 · shoreline.wav");
    expect(page.b).toMatchObject({ key: `mix:${mixId}`, type: "mix", offsetS: 0, integratedLufs: -18 });
    expect(page.b?.audioUrl).toBe(`/releases/${f.releaseId}/tracks/${f.trackId}/mixes/${mixId}/download`);
    // No chains to set side by side.
    expect(page.changes).toBeNull();
    // A render's gain reduction; the mix brings only its loudness line.
    expect(page.aligned!.panels.map((p) => [p.id, Boolean(p.a), Boolean(p.b)])).toEqual([
      ["s0:gr", true, false],
      ["loudness", false, true],
    ]);
    expect(page.aligned!.series.filter((s) => s.source === "B").map((s) => s.kind)).toEqual(["shortTermLufs"]);
    // The analyses of both, the render's output and the mix's own.
    expect(page.analyses.a).toMatchObject({ integratedLufs: -11 });
    expect(page.analyses.b).toMatchObject({ integratedLufs: -18, truePeakDbtp: -3, correlation: 0.8 });
  });

  it("compares two versions of a mix, picked by their keys; a client never gets mixes", async () => {
    const page = (await load("owner", `?a=mix:${mix2Id}&b=mix:${mixId}`)) as Awaited<ReturnType<typeof loader>>;
    expect([page.a?.key, page.b?.key]).toEqual([`mix:${mix2Id}`, `mix:${mixId}`]);
    // v2 has no analysis yet: no loudness to match with, no traces; the page still loads.
    expect(page.a?.integratedLufs).toBeNull();
    expect(page.aligned).toBeNull();
    expect(page.analyses.a).toBeNull();
    // A client asking for a mix lands in the room, which has renders sent to them only.
    expect(await redirectedTo(() => load("client", `?a=mix:${mixId}`))).toBe(`/releases/${f.releaseId}/room?track=${f.trackId}`);
    // A bare id (the e-mailed links) still names a render; a malformed key is ignored.
    const bare = (await load("engineer", `?a=${renders.print}&b=nonsense`)) as Awaited<ReturnType<typeof loader>>;
    expect([bare.a?.key, bare.b?.key]).toEqual([`render:${renders.print}`, `mix:${mixId}`]);
  });

  it("keeps comments on a mix in the studio: staff only, no e-mail to the client", async () => {
    const mailsBefore = await db("outbox_emails").where({ studio_id: f.studioId, to_address: f.users.client.email }).count<{ count: string }[]>("* as count");
    expect(await outcomeOf(() => act("engineer", { intent: "comment", mixId, time: "0:05", body: "Kick is boomy around 60 Hz" }))).toBe("allowed");
    const [row] = await db("comments").where({ mix_id: mixId }).select("id", "time_s");
    expect(row.time_s).toBe(5);
    const mailsAfter = await db("outbox_emails").where({ studio_id: f.studioId, to_address: f.users.client.email }).count<{ count: string }[]>("* as count");
    expect(mailsAfter[0].count).toBe(mailsBefore[0].count);
    const page = (await load("engineer", `?a=mix:${mixId}`)) as Awaited<ReturnType<typeof loader>>;
    expect(page.comments.map((c) => c.body)).toEqual(["Kick is boomy around 60 Hz"]);
    expect(await outcomeOf(() => act("client", { intent: "comment", mixId, time: "0:05", body: "?" }))).toBe("404");
    expect(await outcomeOf(() => act("client", { intent: "resolve", commentId: row.id }))).toBe("404");
    expect(await outcomeOf(() => act("engineer", { intent: "resolve", commentId: row.id }))).toBe("allowed");
    expect((await db("comments").where({ id: row.id }).first("resolved_at")).resolved_at).not.toBeNull();
    // A render and a mix at once, or neither, is not a comment's target.
    expect(dataOf(await act("engineer", { intent: "comment", mixId, renderId: renders.print, time: "1", body: "x" })).status).toBe(400);
    expect(dataOf(await act("engineer", { intent: "comment", time: "1", body: "x" })).status).toBe(400);
  });
});

describe("compare actions: ids and who may act", () => {
  it("answers 400 with the field for a malformed id, 404 for an id that names nothing of this track's", async () => {
    const bad = dataOf<{ fieldErrors: Record<string, string> }>(await act("engineer", { intent: "resolve", commentId: "not-an-id" }));
    expect(bad.status).toBe(400);
    expect(bad.body.fieldErrors.commentId).toBeTruthy();
    expect(dataOf(await act("engineer", { intent: "send", renderId: "123" })).status).toBe(400);
    expect(dataOf(await act("engineer", { intent: "dance" })).status).toBe(400);
    expect(await outcomeOf(() => act("engineer", { intent: "reopen", commentId: randomUUID() }))).toBe("404");
    expect(await outcomeOf(() => act("engineer", { intent: "send", renderId: randomUUID() }))).toBe("404");
    expect(await outcomeOf(() => act("engineer", { intent: "comment", mixId: randomUUID(), time: "1", body: "x" }))).toBe("404");
  });

  it("lets a client resolve or reopen a thread only on a render sent to them, as for commenting", async () => {
    // A thread on the preview, which was never sent to the client.
    expect(await outcomeOf(() => act("engineer", { intent: "comment", renderId: renders.preview, time: "0:10.5", body: "Limiter pumps here" }))).toBe("allowed");
    const hidden = await db("comments").where({ render_id: renders.preview }).first("id");
    expect(await outcomeOf(() => act("client", { intent: "resolve", commentId: hidden.id }))).toBe("404");
    expect(await outcomeOf(() => act("otherClient", { intent: "resolve", commentId: hidden.id }))).toBe("404");
    expect(await outcomeOf(() => act("otherStudio", { intent: "resolve", commentId: hidden.id }))).toBe("404");
    expect((await db("comments").where({ id: hidden.id }).first("resolved_at")).resolved_at).toBeNull();
    // The print was sent (above): its thread is the client's to resolve and reopen.
    const shared = await db("comments").where({ render_id: renders.print }).whereNull("parent_id").first("id");
    expect(await outcomeOf(() => act("client", { intent: "resolve", commentId: shared.id }))).toBe("allowed");
    expect((await db("comments").where({ id: shared.id }).first("resolved_at")).resolved_at).not.toBeNull();
    expect(await outcomeOf(() => act("client", { intent: "reopen", commentId: shared.id }))).toBe("allowed");
    expect((await db("comments").where({ id: shared.id }).first("resolved_at")).resolved_at).toBeNull();
    // Once the preview is sent too, its thread is the client's as well, and the review page links the A/B of the two sent versions.
    // The client approved the print: sending another master asks to review again, once confirmed.
    expect(dataOf<{ error: string }>(await act("engineer", { intent: "send", renderId: renders.preview }))).toMatchObject({ status: 409, body: { error: expect.stringMatching(/review again/) } });
    expect(await outcomeOf(() => act("engineer", { intent: "send", renderId: renders.preview, confirmNewReview: "yes" }))).toBe("allowed");
    expect(await outcomeOf(() => act("client", { intent: "resolve", commentId: hidden.id }))).toBe("allowed");
    const roomPath = `/releases/${f.releaseId}/room?track=${f.trackId}&render=${renders.preview}`;
    const room = (await reviewLoader({ request: requestAs(f, "client", roomPath), params: { releaseId: f.releaseId }, context: {} } as never)) as Awaited<ReturnType<typeof reviewLoader>>;
    expect(room.selected?.current.renderId).toBe(renders.preview);
    expect(room.selected?.versions.map((v) => v.renderId).sort()).toEqual([renders.preview, renders.print].sort());
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

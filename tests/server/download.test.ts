// Downloads of mixes and renders: headers (RFC 6266 name, length, ranges),
// byte ranges as RFC 9110 §14 describes them (206 with Content-Range, 416
// when unsatisfiable), bytes equal to the stored slice; who may fetch what
// (app/lib/render-visibility.server.ts: a client a render sent for review,
// and a print as a download once the invoice is paid).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { contentDisposition, parseRange } from "../../app/lib/http-range.server.ts";
import * as downloadMix from "../../app/routes/download.mix.ts";
import * as downloadRender from "../../app/routes/download.render.ts";
import { probeWavBytes } from "../../dsp/io/wav-reader.ts";
import { UNPAID_STRETCH_S } from "../../app/lib/render-visibility.server.ts";
import { createFixture, destroyFixture, requestAs, type Fixture, type Persona } from "./fixtures.ts";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";

let fixture: Fixture;
let stored: StoredRender;

/** A 16-bit mono WAV at 44.1 kHz of `seconds`, with a counting pattern for samples. */
function wavOf(seconds: number): Buffer {
  const frames = Math.round(seconds * 44_100);
  const data = Buffer.alloc(frames * 2);
  for (let i = 0; i < frames; i++) data.writeInt16LE((i % 2000) - 1000, i * 2);
  const header = Buffer.alloc(44);
  header.write("RIFF", 0);
  header.writeUInt32LE(36 + data.length, 4);
  header.write("WAVEfmt ", 8);
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20);
  header.writeUInt16LE(1, 22);
  header.writeUInt32LE(44_100, 24);
  header.writeUInt32LE(88_200, 28);
  header.writeUInt16LE(2, 32);
  header.writeUInt16LE(16, 34);
  header.write("data", 36);
  header.writeUInt32LE(data.length, 40);
  return Buffer.concat([header, data]);
}

beforeAll(async () => {
  fixture = await createFixture();
  // A real WAV longer than the unpaid stretch, so what a client hears before payment can be checked.
  stored = await addStoredRender({ studioId: fixture.studioId, trackId: fixture.trackId, outputBytes: wavOf(UNPAID_STRETCH_S + 5) });
});
afterAll(async () => {
  await stored?.cleanup();
  await destroyFixture(fixture);
});

const base = () => `/releases/${fixture.releaseId}/tracks/${fixture.trackId}`;

async function fetchRender(persona: Persona, range?: string, search = ""): Promise<Response> {
  const request = requestAs(fixture, persona, `${base()}/renders/${stored.renderId}/download${search}`);
  if (range) request.headers.set("Range", range);
  const params = { releaseId: fixture.releaseId, trackId: fixture.trackId, renderId: stored.renderId };
  return Promise.resolve(downloadRender.loader({ request, params, context: {} } as never)).catch((e: unknown) => e as Response);
}

async function fetchMix(persona: Persona, range?: string): Promise<Response> {
  const request = requestAs(fixture, persona, `${base()}/mixes/${stored.mixId}/download`);
  if (range) request.headers.set("Range", range);
  const params = { releaseId: fixture.releaseId, trackId: fixture.trackId, mixId: stored.mixId };
  return Promise.resolve(downloadMix.loader({ request, params, context: {} } as never)).catch((e: unknown) => e as Response);
}

const bytesOf = async (response: Response) => Buffer.from(await response.arrayBuffer());

describe("parseRange", () => {
  it("reads single ranges, suffixes and open ends; refuses what lies past the end", () => {
    expect(parseRange(null, 100)).toBeNull();
    expect(parseRange("bytes=0-9", 100)).toEqual({ start: 0, end: 9 });
    expect(parseRange("bytes=90-", 100)).toEqual({ start: 90, end: 99 });
    expect(parseRange("bytes=-10", 100)).toEqual({ start: 90, end: 99 });
    expect(parseRange("bytes=-500", 100)).toEqual({ start: 0, end: 99 });
    expect(parseRange("bytes=50-500", 100)).toEqual({ start: 50, end: 99 });
    expect(parseRange("bytes=100-", 100)).toBe("unsatisfiable");
    expect(parseRange("bytes=-0", 100)).toBe("unsatisfiable");
    // Not served as ranges: the whole file instead (RFC 9110 lets a server ignore Range).
    expect(parseRange("bytes=0-1,5-6", 100)).toBeNull();
    expect(parseRange("items=0-1", 100)).toBeNull();
    expect(parseRange("bytes=9-3", 100)).toBeNull();
  });

  it("names files as RFC 6266 asks, with an ASCII fallback", () => {
    expect(contentDisposition("Lowlight Weather - 01 Glass – v2 print.wav")).toBe(
      `attachment; filename="Lowlight Weather - 01 Glass  v2 print.wav"; filename*=UTF-8''Lowlight%20Weather%20-%2001%20Glass%20%E2%80%93%20v2%20print.wav`,
    );
  });
});

describe("render download", () => {
  it("answers the whole print with its headers", async () => {
    const response = await fetchRender("engineer");
    expect(response.status).toBe(200);
    expect(response.headers.get("Content-Type")).toBe("audio/wav");
    expect(response.headers.get("Accept-Ranges")).toBe("bytes");
    expect(response.headers.get("Content-Length")).toBe(String(stored.outputBytes.length));
    const disposition = response.headers.get("Content-Disposition")!;
    expect(disposition).toMatch(/^attachment; filename=".+\.wav"; filename\*=UTF-8''.+\.wav$/);
    expect(disposition).toContain("v1 print");
    expect((await bytesOf(response)).equals(stored.outputBytes)).toBe(true);
  });

  it("answers a range with 206 and exactly those bytes", async () => {
    const response = await fetchRender("engineer", "bytes=1000-4999");
    expect(response.status).toBe(206);
    expect(response.headers.get("Content-Range")).toBe(`bytes 1000-4999/${stored.outputBytes.length}`);
    expect(response.headers.get("Content-Length")).toBe("4000");
    expect(await bytesOf(response)).toEqual(stored.outputBytes.subarray(1000, 5000));
  });

  it("answers a suffix range with the last bytes", async () => {
    const response = await fetchRender("owner", "bytes=-123");
    expect(response.status).toBe(206);
    const size = stored.outputBytes.length;
    expect(response.headers.get("Content-Range")).toBe(`bytes ${size - 123}-${size - 1}/${size}`);
    expect(await bytesOf(response)).toEqual(stored.outputBytes.subarray(size - 123));
  });

  it("answers 416 with the size for a range past the end", async () => {
    const response = await fetchRender("engineer", `bytes=${stored.outputBytes.length}-`);
    expect(response.status).toBe(416);
    expect(response.headers.get("Content-Range")).toBe(`bytes */${stored.outputBytes.length}`);
  });

  it("is a 404 for anyone who may not see the release, and for its client before the render is sent for review", async () => {
    for (const persona of ["otherClient", "otherStudio", "client"] as const) expect((await fetchRender(persona)).status, persona).toBe(404);
    expect((await fetchRender("client", "bytes=0-1", "?inline=1")).status).toBe(404);
  });

  it("lets the client listen to a print sent for review, and download it only once the invoice is paid", async () => {
    await db("review_requests").insert({ track_id: fixture.trackId, render_id: stored.renderId, sent_by: fixture.users.engineer.id });
    const inline = await fetchRender("client", "bytes=0-1", "?inline=1");
    expect(inline.status).toBe(206);
    expect(inline.headers.get("Content-Disposition")).toMatch(/^inline; /);
    // Unpaid: the player gets the print's first stretch as a WAV of its own, never the whole print.
    const stretchBytes = 44 + UNPAID_STRETCH_S * 44_100 * 2;
    expect(inline.headers.get("Content-Range")).toBe(`bytes 0-1/${stretchBytes}`);
    const whole = await fetchRender("client", undefined, "?inline=1");
    const heard = await bytesOf(whole);
    expect(heard.length).toBe(stretchBytes);
    expect(heard.length).toBeLessThan(stored.outputBytes.length);
    expect((await probeWavBytes(heard)).frames).toBe(UNPAID_STRETCH_S * 44_100);
    expect(heard.subarray(44).equals(stored.outputBytes.subarray(44, stretchBytes))).toBe(true);
    // A range across the header's end and one at the stretch's end are the same bytes.
    const across = await bytesOf(await fetchRender("client", "bytes=40-49", "?inline=1"));
    expect(across).toEqual(heard.subarray(40, 50));
    expect((await fetchRender("client", `bytes=${stretchBytes}-`, "?inline=1")).status).toBe(416);
    // Staff hear it whole.
    expect((await bytesOf(await fetchRender("engineer", undefined, "?inline=1"))).length).toBe(stored.outputBytes.length);
    const locked = await fetchRender("client");
    expect(locked.status).toBe(403);
    expect(await locked.text()).toBe("The final files unlock once the invoice is paid.");

    await db("invoices").insert({ studio_id: fixture.studioId, release_id: fixture.releaseId, number: `D-${fixture.tag}`, currency: "EUR", state: "paid", total_cents: 100, sent_at: db.fn.now(), paid_at: db.fn.now() });
    const paid = await fetchRender("client");
    expect(paid.status).toBe(200);
    expect((await bytesOf(paid)).equals(stored.outputBytes)).toBe(true);
    expect((await bytesOf(await fetchRender("client", undefined, "?inline=1"))).length).toBe(stored.outputBytes.length);
  });

  it("gives the client a preview sent for review before payment", async () => {
    await db("invoices").where({ release_id: fixture.releaseId }).delete();
    await db("renders").where({ id: stored.renderId }).update({ kind: "preview", region_start_s: 0, region_end_s: 0.02 });
    const preview = await fetchRender("client");
    expect(preview.status).toBe(200);
    expect(preview.headers.get("Content-Disposition")).toContain("v1 preview");
  });
});

describe("mix download", () => {
  it("gives staff the original, with ranges", async () => {
    const response = await fetchMix("engineer", "bytes=10-19");
    expect(response.status).toBe(206);
    expect(await bytesOf(response)).toEqual(stored.mixBytes.subarray(10, 20));
    expect(response.headers.get("Content-Disposition")).toContain("mix v1.wav");
  });

  it("is a 404 for a client (clients get previews and prints, not originals)", async () => {
    expect((await fetchMix("client")).status).toBe(404);
  });
});

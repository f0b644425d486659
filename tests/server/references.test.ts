// Reference tracks through the routes, against the real database, queue,
// local storage and a worker process of its own: refused exactly like bad
// mixes (same statuses and messages, nothing left behind), analysed on
// arrival (with the spectrum), invisible to everyone but the studio's staff
// (404 on every page, file and API path; never listed to a client), and
// deleted with their stored file.
import { mkdir, mkdtemp, readdir, readFile, rm, stat } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { analyzeFile } from "../../dsp/analysis.ts";
import * as referenceUpload from "../../app/routes/reference-upload.ts";
import * as referenceAudio from "../../app/routes/reference-audio.ts";
import * as mixUpload from "../../app/routes/mix-upload.ts";
import * as releasePage from "../../app/routes/release.tsx";
import * as comparePage from "../../app/routes/compare.tsx";
import * as apiNotFound from "../../app/routes/api.not-found.ts";
import * as apiReleaseTracks from "../../app/routes/api.release-tracks.ts";
import routes from "../../app/routes.ts";
import { createFixture, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";
import { startWorker, waitFor, writeTestWav, type WorkerProcess } from "./worker-harness.ts";

type RouteEntry = { path?: string; file: string; children?: RouteEntry[] };

const queueEnv = { TIDEMARK_QUEUE_NAMESPACE: "test-references", RENDER_JOB_RETRY_LIMIT: "0", ANALYZE_JOB_EXPIRE_SECONDS: "60" };
Object.assign(process.env, queueEnv);

let fixture: Fixture;
let scratch: string;
let tmpDir: string;
let worker: WorkerProcess;
let goodWav: string;
const storageDir = path.resolve(process.env.STORAGE_DIR ?? ".data/storage");

beforeAll(async () => {
  fixture = await createFixture();
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-references-test-"));
  tmpDir = path.join(scratch, "incoming");
  await mkdir(tmpDir);
  process.env.UPLOAD_TMP_DIR = tmpDir;
  goodWav = path.join(scratch, "reference.wav");
  await writeTestWav(goodWav, { seconds: 4, swellHz: 1 });
  worker = await startWorker({ ...queueEnv, WORKER_TMP_DIR: scratch });
});

afterEach(() => {
  delete process.env.UPLOAD_MAX_BYTES;
});

afterAll(async () => {
  await worker?.stop();
  if (fixture) {
    const keys = await db("reference_tracks").where({ release_id: fixture.releaseId }).pluck("storage_key");
    await rm(path.join(storageDir, "references", fixture.releaseId), { recursive: true, force: true });
    expect(keys.length).toBeGreaterThanOrEqual(0);
  }
  await destroyFixture(fixture);
  await rm(scratch, { recursive: true, force: true });
  delete process.env.UPLOAD_TMP_DIR;
  await stopQueue();
  await db.destroy();
});

const releaseParams = () => ({ releaseId: fixture.releaseId });

function rawUpload(url: string, bytes: Uint8Array, name: string, persona: Persona = "engineer"): Request {
  const body = new ReadableStream<Uint8Array>({
    start(controller) {
      for (let i = 0; i < bytes.length; i += 16_384) controller.enqueue(bytes.subarray(i, i + 16_384));
      controller.close();
    },
  });
  const headers: Record<string, string> = { "Content-Type": "application/octet-stream", "X-File-Name": encodeURIComponent(name) };
  if (persona !== "signedOut") headers.Cookie = fixture.users[persona].cookie;
  return new Request(`http://tidemark.test${url}`, { method: "POST", headers, body, duplex: "half" } as RequestInit);
}

async function postReference(bytes: Uint8Array, name: string, persona: Persona = "engineer") {
  const request = rawUpload(`/releases/${fixture.releaseId}/references`, bytes, name, persona);
  const response = (await referenceUpload.action({ request, params: releaseParams(), context: {} } as never)) as Response;
  return { status: response.status, body: (await response.json()) as { error?: string; reference?: { id: string; name: string } } };
}

/** The same bytes as a mix: references must be refused with the same status and words. */
async function postMix(bytes: Uint8Array, name: string) {
  const request = rawUpload(`/releases/${fixture.releaseId}/tracks/${fixture.trackId}/mixes`, bytes, name);
  const response = (await mixUpload.action({ request, params: { releaseId: fixture.releaseId, trackId: fixture.trackId }, context: {} } as never)) as Response;
  return { status: response.status, body: (await response.json()) as { error?: string } };
}

const referenceCount = async () => Number((await db("reference_tracks").where({ release_id: fixture.releaseId }).count<{ count: string }[]>("* as count"))[0].count);
const storedFiles = async () => readdir(path.join(storageDir, "references", fixture.releaseId)).catch(() => [] as string[]);
const spooled = async () => (await readdir(tmpDir).catch(() => [] as string[])).filter((n) => n.startsWith("tidemark-upload-"));

function mp3InWav(): Uint8Array {
  const data = Buffer.alloc(4_000, 0x55);
  const header = Buffer.alloc(44);
  header.write("RIFF", 0);
  header.writeUInt32LE(36 + data.length, 4);
  header.write("WAVE", 8);
  header.write("fmt ", 12);
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(0x0055, 20);
  header.writeUInt16LE(2, 22);
  header.writeUInt32LE(44_100, 24);
  header.writeUInt32LE(16_000, 28);
  header.writeUInt16LE(1, 32);
  header.writeUInt16LE(0, 34);
  header.write("data", 36);
  header.writeUInt32LE(data.length, 40);
  return Buffer.concat([header, data]);
}

describe("reference upload: refused like a bad mix", () => {
  const cases: Array<[string, () => Promise<Uint8Array>, number, string]> = [
    ["not a WAV", async () => Buffer.from("These are liner notes, not audio.\n".repeat(200)), 422, "not a WAV file"],
    ["cut inside its header", async () => (await readFile(goodWav)).subarray(0, 30), 422, "ends inside the fmt chunk"],
    ["a compressed codec", async () => mp3InWav(), 422, "unsupported codec: MPEG Layer 3"],
    ["empty", async () => new Uint8Array(0), 422, "The file is empty."],
  ];
  for (const [what, bytes, status, words] of cases) {
    it(`${what}: ${status}, the mix upload's message, nothing left`, async () => {
      const before = { rows: await referenceCount(), files: await storedFiles() };
      const ref = await postReference(await bytes(), "ref.wav");
      const mix = await postMix(await bytes(), "mix.wav");
      expect(ref.status).toBe(status);
      expect(ref.body.error).toContain(words);
      expect(ref).toEqual(mix);
      expect(await referenceCount()).toBe(before.rows);
      expect(await storedFiles()).toEqual(before.files);
      expect(await spooled()).toEqual([]);
    });
  }

  it("past UPLOAD_MAX_BYTES: 413 while streaming, nothing left", async () => {
    process.env.UPLOAD_MAX_BYTES = "66000";
    const before = { rows: await referenceCount(), files: await storedFiles() };
    const bytes = await readFile(goodWav);
    const ref = await postReference(bytes, "big.wav");
    expect(ref).toEqual({ status: 413, body: { error: "The file is larger than the upload limit of 66 kB." } });
    expect(ref).toEqual(await postMix(bytes, "big.wav"));
    expect(await referenceCount()).toBe(before.rows);
    expect(await storedFiles()).toEqual(before.files);
    expect(await spooled()).toEqual([]);
  });
});

describe("a good reference", () => {
  let referenceId: string;

  it("is stored, listed on the release page for staff and analysed on arrival (with its spectrum)", async () => {
    const { status, body } = await postReference(await readFile(goodWav), "Harbour Lights (reference).wav");
    expect(status).toBe(201);
    referenceId = body.reference!.id;
    expect(await storedFiles()).toEqual([`${referenceId}.wav`]);
    const row = await waitFor(
      async () => {
        const r = await db("reference_tracks").where({ id: referenceId }).first();
        return r?.analysis_state === "done" ? r : undefined;
      },
      60_000,
      "the reference's analysis",
    );
    const expected = await analyzeFile(goodWav);
    expect(row.analysis.integratedLufs).toBeCloseTo(expected.integratedLufs, 6);
    expect(row.analysis.thirdOctave).toHaveLength(30);
    expect(row.analysis.thirdOctave[16].centreHz).toBe(1000);
    const page = (await releasePage.loader({ request: requestAs(fixture, "engineer", `/releases/${fixture.releaseId}`), params: releaseParams(), context: {} } as never)) as {
      references: { id: string; originalName: string }[];
    };
    expect(page.references.map((r) => [r.id, r.originalName])).toEqual([[referenceId, "Harbour Lights (reference).wav"]]);
  });

  it("is served to staff with byte ranges", async () => {
    const request = new Request(`http://tidemark.test/releases/${fixture.releaseId}/references/${referenceId}/audio`, { headers: { Cookie: fixture.users.owner.cookie, Range: "bytes=0-11" } });
    const response = (await referenceAudio.loader({ request, params: { releaseId: fixture.releaseId, referenceId }, context: {} } as never)) as Response;
    expect(response.status).toBe(206);
    expect(Buffer.from(await response.arrayBuffer()).subarray(0, 4).toString()).toBe("RIFF");
  });

  it("is invisible to clients and other studios: 404 on every route and API path, never listed", async () => {
    const path = (p: string) => `/releases/${fixture.releaseId}${p}`;
    for (const persona of ["client", "otherClient", "otherStudio"] as const) {
      // Its file.
      expect(
        await outcomeOf(() => Promise.resolve(referenceAudio.loader({ request: requestAs(fixture, persona, path(`/references/${referenceId}/audio`)), params: { releaseId: fixture.releaseId, referenceId }, context: {} } as never))),
        `${persona}: audio`,
      ).toBe("404");
      // Upload and delete.
      const before = await referenceCount();
      expect(await outcomeOf(() => Promise.resolve(referenceUpload.action({ request: rawUpload(path("/references"), new Uint8Array(8), "x.wav", persona), params: releaseParams(), context: {} } as never))), `${persona}: upload`).toBe("404");
      expect(
        await outcomeOf(() =>
          Promise.resolve(releasePage.action({ request: requestAs(fixture, persona, path(""), { form: { intent: "delete-reference", referenceId } }), params: releaseParams(), context: {} } as never)),
        ),
        `${persona}: delete`,
      ).toBe("404");
      expect(await referenceCount()).toBe(before);
      // The compare page, even when asked for it by key.
      const compareUrl = path(`/tracks/${fixture.trackId}/compare?b=reference:${referenceId}`);
      const compare = comparePage.loader({ request: requestAs(fixture, persona, compareUrl), params: { releaseId: fixture.releaseId, trackId: fixture.trackId }, context: {} } as never);
      // A client is sent on to the review room (which never offers references); another studio meets a 404.
      const compareResult = await Promise.resolve(compare).catch((thrown: unknown) => thrown);
      if (compareResult instanceof Response) {
        expect([302, 404], `${persona}: compare`).toContain(compareResult.status);
        if (compareResult.status === 302) expect(compareResult.headers.get("Location")).toMatch(/\/room/);
      } else expect(JSON.stringify(compareResult)).not.toContain(referenceId);
      // The release page.
      const page = releasePage.loader({ request: requestAs(fixture, persona, path("")), params: releaseParams(), context: {} } as never);
      const pageOutcome = await outcomeOf(() => Promise.resolve(page));
      if (pageOutcome === "allowed") {
        const data = (await page) as { references: unknown[]; album: unknown };
        expect(data.references, `${persona}: release page`).toEqual([]);
        expect(data.album).toBeNull();
        expect(JSON.stringify(data)).not.toContain(referenceId);
      } else expect(pageOutcome, `${persona}: release page`).toBe("404");
    }
    // The API has no reference path at all (its catch-all answers 404 to anything else), and the only
    // routes that touch references are the two staff-only ones checked above.
    const flat = (entries: RouteEntry[]): RouteEntry[] => entries.flatMap((e) => [e, ...flat(e.children ?? [])]);
    const touching = flat(routes as RouteEntry[]).filter((e) => /reference/.test(e.file));
    expect(touching.map((e) => [e.path, e.file]).sort()).toEqual([
      ["releases/:releaseId/references", "routes/reference-upload.ts"],
      ["releases/:releaseId/references/:referenceId/audio", "routes/reference-audio.ts"],
    ]);
    expect((await apiNotFound.loader()).status).toBe(404);
    // And the API's track list of the release never names it.
    const tracks = await Promise.resolve(
      apiReleaseTracks.loader({ request: requestAs(fixture, "client", `/api/releases/${fixture.releaseId}/tracks`), params: releaseParams(), context: {} } as never),
    ).catch((e: unknown) => e);
    const text = tracks instanceof Response ? await tracks.clone().text() : JSON.stringify(tracks);
    expect(text).not.toContain(referenceId);
    // Signed out: to the sign-in page.
    expect(
      await outcomeOf(() => Promise.resolve(referenceAudio.loader({ request: requestAs(fixture, "signedOut", path(`/references/${referenceId}/audio`)), params: { releaseId: fixture.releaseId, referenceId }, context: {} } as never))),
    ).toBe("sign-in");
  });

  it("is deleted with its stored file by staff", async () => {
    const file = path.join(storageDir, "references", fixture.releaseId, `${referenceId}.wav`);
    expect((await stat(file)).isFile()).toBe(true);
    const result = await releasePage.action({ request: requestAs(fixture, "owner", `/releases/${fixture.releaseId}`, { form: { intent: "delete-reference", referenceId } }), params: releaseParams(), context: {} } as never);
    expect(result).toEqual({ error: null, intent: "delete-reference" });
    expect(await db("reference_tracks").where({ id: referenceId }).first()).toBeUndefined();
    await expect(stat(file)).rejects.toThrow();
    // A second delete, or another release's id: 404.
    expect(
      await outcomeOf(() =>
        Promise.resolve(releasePage.action({ request: requestAs(fixture, "owner", `/releases/${fixture.releaseId}`, { form: { intent: "delete-reference", referenceId } }), params: releaseParams(), context: {} } as never)),
      ),
    ).toBe("404");
  });
});

describe("album gaps", () => {
  it("staff set a track's gap (stored with the release); bad values are 400 with the field's message; clients get 404", async () => {
    const request = (persona: Persona, gapS: string) => requestAs(fixture, persona, `/releases/${fixture.releaseId}`, { form: { intent: "gap", trackId: fixture.trackId, gapS } });
    expect(await releasePage.action({ request: request("engineer", "3.5"), params: releaseParams(), context: {} } as never)).toEqual({ error: null, intent: "gap" });
    const row = await db("releases").where({ id: fixture.releaseId }).first("album_gaps");
    expect(row.album_gaps).toEqual({ [fixture.trackId]: 3.5 });
    const bad = (await releasePage.action({ request: request("engineer", "-1"), params: releaseParams(), context: {} } as never)) as { init: { status: number }; data: { error: string } };
    expect(bad.init.status).toBe(400);
    expect(bad.data.error).toBe("A gap cannot be negative.");
    expect(await outcomeOf(() => Promise.resolve(releasePage.action({ request: request("client", "9"), params: releaseParams(), context: {} } as never)))).toBe("404");
    expect((await db("releases").where({ id: fixture.releaseId }).first("album_gaps")).album_gaps).toEqual({ [fixture.trackId]: 3.5 });
  });
});

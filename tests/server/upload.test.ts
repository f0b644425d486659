// Mix uploads through the routes, against the real database, queue, local
// storage and a worker process of its own: bad files are refused with the
// reader's specific message and leave no row, no stored file and no
// temporary file; a good file becomes the next version and is analysed.
import { mkdir, mkdtemp, readdir, readFile, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, afterEach, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { getMix } from "../../app/models/mix.server.ts";
import { analyzeFile } from "../../dsp/analysis.ts";
import { probeWav, WavFormatError } from "../../dsp/io/wav-reader.ts";
import * as mixUpload from "../../app/routes/mix-upload.ts";
import * as track from "../../app/routes/track.tsx";
import { cookieFor } from "./fixtures.ts";
import { createFixture, startWorker, waitFor, writeTestWav, type Fixture, type WorkerProcess } from "./worker-harness.ts";

const queueEnv = { TIDEMARK_QUEUE_NAMESPACE: "test-upload", RENDER_JOB_RETRY_LIMIT: "0", ANALYZE_JOB_EXPIRE_SECONDS: "60" };
Object.assign(process.env, queueEnv);

let fixture: Fixture;
let cookie: string;
let scratch: string;
let tmpDir: string;
let worker: WorkerProcess;
let goodWav: string;
const storageDir = path.resolve(process.env.STORAGE_DIR ?? ".data/storage");

beforeAll(async () => {
  fixture = await createFixture("upload");
  cookie = await cookieFor(fixture.userId, fixture.studioId);
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-upload-test-"));
  // Where the model spools uploads: checked empty after every refusal.
  tmpDir = path.join(scratch, "incoming");
  await mkdir(tmpDir);
  process.env.UPLOAD_TMP_DIR = tmpDir;
  process.env.WORKER_TMP_DIR = tmpDir;
  goodWav = path.join(scratch, "good.wav");
  await writeTestWav(goodWav, { seconds: 3, swellHz: 1 });
  // The worker keeps its own scratch folder elsewhere, so this one holds only uploads.
  worker = await startWorker({ ...queueEnv, WORKER_TMP_DIR: scratch });
});

afterEach(() => {
  delete process.env.UPLOAD_MAX_BYTES;
});

afterAll(async () => {
  await worker?.stop();
  await fixture?.cleanup();
  await rm(scratch, { recursive: true, force: true });
  delete process.env.UPLOAD_TMP_DIR;
  delete process.env.WORKER_TMP_DIR;
  await stopQueue();
  await db.destroy();
});

const trackPath = () => `/releases/${fixture.releaseId}/tracks/${fixture.trackId}`;
const params = () => ({ releaseId: fixture.releaseId, trackId: fixture.trackId });

/** A raw-body upload as the page's script sends it; the body is a stream, as from a socket. */
function rawUpload(bytes: Uint8Array, name: string, as = cookie): Request {
  const body = new ReadableStream<Uint8Array>({
    start(controller) {
      // In pieces, as a network delivers them.
      for (let i = 0; i < bytes.length; i += 16_384) controller.enqueue(bytes.subarray(i, i + 16_384));
      controller.close();
    },
  });
  return new Request(`http://tidemark.test${trackPath()}/mixes`, {
    method: "POST",
    headers: { Cookie: as, "Content-Type": "application/octet-stream", "X-File-Name": encodeURIComponent(name) },
    body,
    duplex: "half",
  } as RequestInit);
}

async function postRaw(bytes: Uint8Array, name: string) {
  const response = (await mixUpload.action({ request: rawUpload(bytes, name), params: params(), context: {} } as never)) as Response;
  return { status: response.status, body: (await response.json()) as { error?: string; mix?: { id: string; version: number } } };
}

async function mixCount(): Promise<number> {
  const [{ count }] = await db("mixes").where({ track_id: fixture.trackId }).count<{ count: string }[]>("* as count");
  return Number(count);
}

async function storedFiles(): Promise<string[]> {
  return readdir(path.join(storageDir, "mixes", fixture.trackId)).catch(() => []);
}

/** Upload spool folders left in the temporary folder. */
async function spooled(): Promise<string[]> {
  return (await readdir(tmpDir).catch(() => [] as string[])).filter((name) => name.startsWith("tidemark-upload-"));
}

async function expectNothingLeft(before: { rows: number; files: string[] }) {
  expect(await mixCount()).toBe(before.rows);
  expect(await storedFiles()).toEqual(before.files);
  expect(await spooled()).toEqual([]);
}

/** What probeWav says of these bytes, so the route is checked to pass the reader's own reason on. */
async function readerMessage(bytes: Uint8Array): Promise<string> {
  const file = path.join(scratch, `probe-${Math.random()}.wav`);
  await writeFile(file, bytes);
  const error = await probeWav(file).then(
    () => undefined,
    (e: unknown) => e,
  );
  expect(error).toBeInstanceOf(WavFormatError);
  return (error as WavFormatError).message;
}

/** A WAV header naming a compressed codec (MPEG Layer 3, tag 0x0055) with some bytes of "audio". */
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

describe("mix upload", () => {
  it("refuses a file that is not a WAV with the reader's message, leaving nothing behind", async () => {
    const before = { rows: await mixCount(), files: await storedFiles() };
    const bytes = Buffer.from("These are liner notes, not audio.\n".repeat(200));
    const { status, body } = await postRaw(bytes, "notes.wav");
    expect(status).toBe(422);
    expect(body.error).toBe(`The file was refused: ${await readerMessage(bytes)}.`);
    expect(body.error).toContain("not a WAV file");
    await expectNothingLeft(before);
  });

  it("refuses a truncated WAV (cut inside its header)", async () => {
    const before = { rows: await mixCount(), files: await storedFiles() };
    const bytes = (await readFile(goodWav)).subarray(0, 30);
    const { status, body } = await postRaw(bytes, "cut.wav");
    expect(status).toBe(422);
    expect(body.error).toBe(`The file was refused: ${await readerMessage(bytes)}.`);
    expect(body.error).toContain("ends inside the fmt chunk");
    await expectNothingLeft(before);
  });

  it("refuses a WAV holding a compressed codec, naming it", async () => {
    const before = { rows: await mixCount(), files: await storedFiles() };
    const { status, body } = await postRaw(mp3InWav(), "compressed.wav");
    expect(status).toBe(422);
    expect(body.error).toContain("unsupported codec: MPEG Layer 3");
    await expectNothingLeft(before);
  });

  it("refuses a float WAV holding a non-finite sample, naming the first, leaving nothing behind", async () => {
    const before = { rows: await mixCount(), files: await storedFiles() };
    // Stereo float 32-bit at 48 kHz: 2 s of quiet signal, then NaN in the right channel at frame 70000.
    const frames = 96_000;
    const data = Buffer.alloc(frames * 8);
    for (let i = 0; i < frames; i++) {
      data.writeFloatLE(0.1 * Math.sin(i / 20), i * 8);
      data.writeFloatLE(0.1 * Math.cos(i / 20), i * 8 + 4);
    }
    data.writeFloatLE(Number.NaN, 70_000 * 8 + 4);
    data.writeFloatLE(Number.POSITIVE_INFINITY, 80_000 * 8);
    const header = Buffer.alloc(44);
    header.write("RIFF", 0);
    header.writeUInt32LE(36 + data.length, 4);
    header.write("WAVEfmt ", 8);
    header.writeUInt32LE(16, 16);
    header.writeUInt16LE(3, 20);
    header.writeUInt16LE(2, 22);
    header.writeUInt32LE(48_000, 24);
    header.writeUInt32LE(48_000 * 8, 28);
    header.writeUInt16LE(8, 32);
    header.writeUInt16LE(32, 34);
    header.write("data", 36);
    header.writeUInt32LE(data.length, 40);
    const { status, body } = await postRaw(Buffer.concat([header, data]), "nan.wav");
    expect(status).toBe(422);
    expect(body.error).toContain("not a finite number");
    expect(body.error).toContain("at frame 70000, channel 2");
    await expectNothingLeft(before);
  });

  it("refuses a file past UPLOAD_MAX_BYTES with 413 while streaming it", async () => {
    process.env.UPLOAD_MAX_BYTES = "66000";
    const before = { rows: await mixCount(), files: await storedFiles() };
    const bytes = await readFile(goodWav);
    expect(bytes.length).toBeGreaterThan(66_000);
    const { status, body } = await postRaw(bytes, "big.wav");
    expect(status).toBe(413);
    expect(body.error).toBe("The file is larger than the upload limit of 66 kB.");
    await expectNothingLeft(before);
  });

  it("refuses an upload by a client of the release with a 404", async () => {
    const [release] = await db("releases").where({ id: fixture.releaseId }).select("client_id");
    const [user] = await db("users").insert({ email: `client-${fixture.trackId}@example.test`, name: "Client", password_hash: "x" }).returning("id");
    await db("memberships").insert({ user_id: user.id, studio_id: fixture.studioId, role: "client", client_id: release.client_id });
    const before = { rows: await mixCount(), files: await storedFiles() };
    try {
      const request = rawUpload(await readFile(goodWav), "client.wav", await cookieFor(user.id, fixture.studioId));
      const thrown = await Promise.resolve(mixUpload.action({ request, params: params(), context: {} } as never)).catch((e: unknown) => e);
      expect((thrown as Response).status).toBe(404);
      await expectNothingLeft(before);
    } finally {
      await db("users").where({ id: user.id }).delete();
    }
  });

  it("stores a good WAV as the next version, and the worker analyses it", async () => {
    const before = await mixCount();
    const { status, body } = await postRaw(await readFile(goodWav), "Low Water (mix 3).wav");
    expect(status).toBe(201);
    expect(body.mix!.version).toBe(before + 1);
    const mix = (await getMix(body.mix!.id))!;
    expect(mix.originalName).toBe("Low Water (mix 3).wav");
    expect(mix.sampleRateHz).toBe(48_000);
    expect(mix.channels).toBe(2);
    expect(mix.frames).toBe(3 * 48_000);
    expect(await storedFiles()).toContain(`${mix.id}.wav`);
    expect(await readFile(path.join(storageDir, mix.storageKey))).toEqual(await readFile(goodWav));
    expect(await spooled()).toEqual([]);
    const analysed = await waitFor(async () => {
      const now = await getMix(mix.id);
      if (now?.analysisState === "failed") throw new Error(`analysis failed: ${now.analysisError}`);
      return now?.analysisState === "done" && now;
    }, 30_000, "the analysis");
    const expected = await analyzeFile(goodWav);
    const analysis = analysed.analysis as Record<string, number>;
    expect(analysis.integratedLufs).toBeCloseTo(expected.integratedLufs, 6);
    expect(analysis.truePeakDbtp).toBeCloseTo(expected.truePeakDbtp, 6);
  });

  it("takes the plain multipart form post (no script) and sends the browser back to the track", async () => {
    const before = await mixCount();
    const form = new FormData();
    form.append("intent", "upload");
    form.append("file", new Blob([await readFile(goodWav)], { type: "audio/wav" }), "second.wav");
    form.append("file", new Blob([await readFile(goodWav)], { type: "audio/wav" }), "third.wav");
    const request = new Request(`http://tidemark.test${trackPath()}`, { method: "POST", headers: { Cookie: cookie }, body: form });
    const result = await track.action({ request, params: params(), context: {} } as never);
    expect((result as Response).status).toBe(303);
    const rows = await db("mixes").where({ track_id: fixture.trackId }).where("version", ">", before).orderBy("version").select("original_name");
    expect(rows.map((r) => r.original_name)).toEqual(["second.wav", "third.wav"]);
  });

  it("answers the form post of a bad file with the message for the page", async () => {
    const before = { rows: await mixCount(), files: await storedFiles() };
    const form = new FormData();
    form.append("file", new Blob([new Uint8Array(mp3InWav())]), "compressed.wav");
    const request = new Request(`http://tidemark.test${trackPath()}`, { method: "POST", headers: { Cookie: cookie }, body: form });
    const result = (await track.action({ request, params: params(), context: {} } as never)) as { data: { error: string }; init: { status: number } };
    expect(result.init.status).toBe(422);
    expect(result.data.error).toContain("unsupported codec");
    await expectNothingLeft(before);
  });
});

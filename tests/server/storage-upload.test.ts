// Uploads becoming mix versions (the model under the upload route): a file
// is recognised by its WAV header, not its name; a refused file (not a WAV,
// truncated, an unsupported codec, past the size limit) gives its specific
// message and leaves no row and no stored file.
import { mkdtemp, readFile, readdir, rm } from "node:fs/promises";
import { createReadStream } from "node:fs";
import os from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";

const storageDir = await mkdtemp(path.join(os.tmpdir(), "tidemark-upload-storage-"));
Object.assign(process.env, { STORAGE_DRIVER: "local", STORAGE_DIR: storageDir, TIDEMARK_QUEUE_NAMESPACE: "test-upload" });

const { db } = await import("../../app/lib/db.server.ts");
const { addUploadedMix, listMixVersions, MixUploadError } = await import("../../app/models/mix.server.ts");
const { cancelJob, queueSettings, stopQueue } = await import("../../app/lib/queue.server.ts");
const { createFixture, writeTestWav } = await import("../../harness/worker-harness.ts");

let fixture: Awaited<ReturnType<typeof createFixture>>;
let scratch: string;
let goodWav: Buffer;

beforeAll(async () => {
  fixture = await createFixture("upload");
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-upload-test-"));
  await writeTestWav(path.join(scratch, "good.wav"), { seconds: 1, channels: 2, bitDepth: 16 });
  goodWav = await readFile(path.join(scratch, "good.wav"));
});

afterAll(async () => {
  const jobs = await db("mixes").where({ track_id: fixture.trackId }).whereNotNull("analysis_job_id").pluck("analysis_job_id");
  for (const id of jobs) await cancelJob(queueSettings().analyzeQueue, id);
  await fixture?.cleanup();
  await rm(scratch, { recursive: true, force: true });
  await rm(storageDir, { recursive: true, force: true });
  await stopQueue();
  await db.destroy();
});

async function storedFiles(): Promise<string[]> {
  return (await readdir(storageDir, { recursive: true, withFileTypes: true })).filter((e) => e.isFile()).map((e) => e.name);
}

async function refused(body: Buffer, maxBytes?: number) {
  const error = await addUploadedMix({ trackId: fixture.trackId, originalName: "mix.wav", body: Readable.from([body]), maxBytes }).catch((e) => e);
  expect(error).toBeInstanceOf(MixUploadError);
  expect(await listMixVersions(fixture.trackId)).toEqual([]);
  expect(await storedFiles()).toEqual([]);
  return error as InstanceType<typeof MixUploadError>;
}

describe("uploads refused for their content", () => {
  it("not a WAV", async () => {
    const error = await refused(Buffer.from("ID3\u0003 this is not a wave file at all, whatever its name says"));
    expect(error.code).toBe("not-riff");
    expect(error.message).toMatch(/RIFF|WAV/i);
  });

  it("truncated", async () => {
    const error = await refused(goodWav.subarray(0, Math.floor(goodWav.length / 2)));
    // The reader names it by what it sees: a data chunk longer than the rest of the file.
    expect(error.code).toBe("bad-size");
    expect(error.message).toMatch(/data chunk claims \d+ bytes but only \d+ follow it in the file \(truncated/);
  });

  it("an unsupported codec", async () => {
    const adpcm = Buffer.from(goodWav);
    // The fmt chunk's format tag (offset 20): 2 = Microsoft ADPCM.
    adpcm.writeUInt16LE(2, 20);
    const error = await refused(adpcm);
    expect(error.code).toBe("unsupported-codec");
  });

  it("over the size limit, stopped while it streams", async () => {
    const error = await refused(goodWav, 10_000);
    expect(error.code).toBe("too-large");
    expect(error.message).toBe("the file is larger than the limit of 10 kB");
  });

  it("empty", async () => {
    expect((await refused(Buffer.alloc(0))).code).toBe("empty");
  });
});

describe("an accepted upload", () => {
  it("is recognised by its header whatever its name, stored, and queued for analysis", async () => {
    const mix = await addUploadedMix({
      trackId: fixture.trackId,
      originalName: "final-final.mp3",
      body: createReadStream(path.join(scratch, "good.wav"), { highWaterMark: 4096 }),
      uploadedBy: fixture.userId,
    });
    expect(mix).toMatchObject({ version: 1, originalName: "final-final.mp3", sizeBytes: goodWav.length, sampleRateHz: 48_000, channels: 2, bitDepth: 16, sampleFormat: "int", frames: 48_000, analysisState: "pending" });
    expect(await readFile(path.join(storageDir, ...mix.storageKey.split("/")))).toEqual(goodWav);
    const [row] = await db("mixes").where({ id: mix.id }).select("analysis_job_id");
    expect(row.analysis_job_id).toBeTruthy();
  });
});

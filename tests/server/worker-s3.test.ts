// The S3 driver end to end against the fake S3 server: a mix uploaded to the
// bucket, analysed and rendered by a worker that reads and writes the
// bucket, and the print downloaded from it.
import { mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { createChain, createRevision } from "../../app/models/chain.server.ts";
import { getMix } from "../../app/models/mix.server.ts";
import { createRender } from "../../app/models/render.server.ts";
import { stopQueue } from "../../app/lib/queue.server.ts";
import { analyzeFile } from "../../dsp/analysis.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createFixture, gentleChain, startWorker, uploadTestMix, waitFor, waitForRender, type Fixture, type WorkerProcess } from "../../harness/worker-harness.ts";

const s3 = Boolean(process.env.S3_ENDPOINT && process.env.S3_BUCKET);
const env = { TIDEMARK_QUEUE_NAMESPACE: "test-s3", STORAGE_DRIVER: "s3", RENDER_JOB_EXPIRE_SECONDS: "60" };
Object.assign(process.env, env);

let fixture: Fixture;
let scratch: string;
let worker: WorkerProcess | undefined;

beforeAll(async () => {
  if (!s3) return;
  fixture = await createFixture("worker-s3");
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-s3-test-"));
  // The worker's temporary copies go to a folder of ours, so the test can see them cleaned up.
  worker = await startWorker({ ...env, WORKER_TMP_DIR: path.join(scratch, "worker-tmp") });
});

afterAll(async () => {
  await worker?.stop();
  await fixture?.cleanup();
  if (scratch) await rm(scratch, { recursive: true, force: true });
  await stopQueue();
  await db.destroy();
});

describe.skipIf(!s3)("S3 storage end to end", () => {
  it("uploads a mix to the bucket, renders a print from it and downloads the print", async () => {
    expect(storage().kind).toBe("s3");
    const mix = await uploadTestMix(fixture, scratch, "s3-mix.wav", { seconds: 4, swellHz: 1 });
    expect((await storage().stat(mix.storageKey)).sizeBytes).toBe(mix.sizeBytes);
    await waitFor(async () => (await getMix(mix.id))?.analysisState === "done", 30_000, "the analysis");

    const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "S3 chain" });
    const revision = await createRevision(chain.id, gentleChain(), fixture.userId);
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print" });
    const done = await waitForRender(render.id, "done", 60_000);

    // Downloaded through the S3 API: a whole WAV of the mix's length, as the worker measured it.
    const downloaded = path.join(scratch, "print.wav");
    const chunks: Buffer[] = [];
    for await (const chunk of await storage().get(done.output!.key)) chunks.push(Buffer.from(chunk));
    await writeFile(downloaded, Buffer.concat(chunks));
    expect((await probeWav(downloaded)).frames).toBe(mix.frames);
    const measured = await analyzeFile(downloaded);
    const output = done.outputAnalysis as Record<string, number>;
    expect(Math.abs(output.integratedLufs - measured.integratedLufs)).toBeLessThan(0.001);
    expect(measured.truePeakDbtp).toBeLessThanOrEqual(-1 + 0.1);

    // A range read, as a seeking <audio> element asks for.
    const head = await readFile(downloaded);
    const ranged: Buffer[] = [];
    for await (const chunk of await storage().get(done.output!.key, { start: 0, end: 11 })) ranged.push(Buffer.from(chunk));
    expect(Buffer.concat(ranged).equals(head.subarray(0, 12))).toBe(true);

    // The worker's downloaded copy of the mix is gone once the job ended; only its own (empty) folder is left.
    const fs = await import("node:fs/promises");
    const folders = await fs.readdir(path.join(scratch, "worker-tmp"));
    expect(folders).toEqual([`tidemark-worker-${worker!.pid}`]);
    expect(await fs.readdir(path.join(scratch, "worker-tmp", folders[0]))).toEqual([]);
  });
});

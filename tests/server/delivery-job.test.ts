// The worker's "deliver" job handler (app/jobs/delivery-job.server.ts) on the
// real test database, queue and storage: an approved print of a synthesized
// mix (a swelling chord whose peaks reach full scale, so the limiter has work
// at every ceiling) is queued through the delivery page's "Make deliveries",
// and each job fetched from the queue runs through runDeliveryJob here.
// Checked per format: the file's sample rate and word length, the bext
// loudness fields (EBU Tech 3285 v2 stores them in hundredths, so they equal
// the recorded analysis to 0.01), and the true peak, measured again by our
// ITU-R BS.1770-4 meter, at or under the ceiling. Then the handler's other
// branches: a finished delivery is not made twice (nor queued twice), a job
// of a delivery that is gone completes, a job without a delivery id fails, a
// print missing from storage fails the row and the try.
process.env.TIDEMARK_QUEUE_NAMESPACE = `deliver-job-${process.pid}`;
process.env.RENDER_JOB_RETRY_LIMIT = "1";
process.env.RENDER_JOB_RETRY_DELAY_SECONDS = "0";
import { randomUUID } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type PgBoss from "pg-boss";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { runDeliveryJob } from "../../app/jobs/delivery-job.server.ts";
import { queueSettings, startBoss, stopQueue } from "../../app/jobs/queue.server.ts";
import type { WorkerContext } from "../../app/jobs/worker-context.server.ts";
import { releaseFormats } from "../../app/models/delivery.server.ts";
import * as deliveryPage from "../../app/routes/release-delivery.tsx";
import { analyzeFile } from "../../dsp/analysis.ts";
import { readBextFromWav } from "../../dsp/delivery/bext-wav.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { writeTestWav } from "./worker-harness.ts";

const settings = queueSettings();
let fixture: Fixture;
let dir: string;
let boss: PgBoss;
let ctx: WorkerContext;
let printKey: string;
let printId: string;

async function jobState(id: string): Promise<string> {
  const row = await db.raw(`SELECT state FROM pgboss.job WHERE id = ?`, [id]);
  return row.rows[0]?.state;
}

/** Every job waiting in this file's deliver queue. */
async function fetchJobs(): Promise<PgBoss.JobWithMetadata<unknown>[]> {
  return boss.fetch<unknown>(settings.deliverQueue, { includeMetadata: true, batchSize: 20 });
}

const makeDeliveries = async () =>
  dataOf<{ queued: number; leftOut: number }>(
    await deliveryPage.action({ request: requestAs(fixture, "engineer", `/releases/${fixture.releaseId}/delivery`, { form: { intent: "make" } }), params: { releaseId: fixture.releaseId }, context: {} } as never),
  ).body;

beforeAll(async () => {
  fixture = await createFixture();
  dir = await mkdtemp(join(tmpdir(), "tidemark-delivery-job-"));
  boss = await startBoss(settings);
  ctx = { boss, pool: undefined as never, storage: storage(), settings, tmpDir: dir, track: () => () => {} };
  await db("tracks").where({ id: fixture.trackId }).update({ title: "Undertow", isrc: "ZZQ1X2600007" });

  // The synthesized mix, 3 s at 48 kHz in 32-bit float: partials summing to a peak of 1.05 at the swell's top.
  const path = join(dir, "print.wav");
  const frames = await writeTestWav(path, { seconds: 3, bitDepth: 32, float: true, partials: [[55, 0.45], [220, 0.3], [1_250, 0.2], [4_800, 0.1]], swellHz: 0.7 });
  printKey = `renders/${fixture.tag}/${randomUUID()}.wav`;
  await storage().put(printKey, { filePath: path }, { contentType: "audio/wav" });
  const [mix] = await db("mixes")
    .insert({ track_id: fixture.trackId, version: 1, original_name: "undertow.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 32, sample_format: "float", frames, created_at: new Date(Date.now() - 120_000) })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: fixture.trackId, name: "Job chain" }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: printKey, finished_at: new Date(Date.now() - 60_000) }).returning("id");
  printId = render.id;
  await db("review_requests").insert({ track_id: fixture.trackId, render_id: printId, sent_by: fixture.users.engineer.id, created_at: new Date(Date.now() - 30_000) });
  await db("review_events").insert({ track_id: fixture.trackId, render_id: printId, kind: "approve", user_id: fixture.users.client.id, created_at: new Date(Date.now() - 10_000) });
});

afterAll(async () => {
  if (fixture) {
    for (const row of await db("deliveries").where({ release_id: fixture.releaseId }).whereNotNull("storage_key").select("storage_key")) await storage().delete(row.storage_key);
    await db("deliveries").where({ release_id: fixture.releaseId }).delete();
    if (printId) await db("renders").where({ id: printId }).delete();
  }
  if (printKey) await storage().delete(printKey);
  await boss?.stop({ graceful: false, wait: true });
  await stopQueue();
  await destroyFixture(fixture);
  if (dir) await rm(dir, { recursive: true, force: true });
});

describe("the deliver job", () => {
  it("makes every format of the approved print: format, bext loudness and ceiling", async () => {
    const formats = await releaseFormats(fixture.releaseId);
    expect(await makeDeliveries()).toEqual({ intent: "make", errors: {}, values: {}, queued: formats.length, alreadyMade: 0, leftOut: 0, printsQueued: 0 });
    const jobs = await fetchJobs();
    expect(jobs).toHaveLength(formats.length);
    for (const job of jobs) {
      await runDeliveryJob(job, ctx);
      expect(await jobState(job.id)).toBe("completed");
    }

    const rows = await db("deliveries").where({ release_id: fixture.releaseId });
    expect(rows).toHaveLength(formats.length);
    for (const format of formats) {
      const row = rows.find((r) => r.format_id === format.id)!;
      expect(row, format.name).toMatchObject({ state: "done", source_render_id: printId, warnings: [] });
      const local = await storage().localFile(row.storage_key);
      try {
        const wav = await probeWav(local.path);
        expect(wav, format.name).toMatchObject({ sampleRate: format.sampleRate, bitDepth: format.bitDepth, sampleFormat: "int", channels: 2 });
        const bext = (await readBextFromWav(local.path))!;
        expect(bext.version).toBe(2);
        expect(bext.isrc).toBe("ZZQ1X2600007");
        // Hundredths of a unit, as the chunk stores them.
        expect(bext.loudness.integratedLufs).toBeCloseTo(row.analysis.integratedLufs, 2);
        expect(bext.loudness.loudnessRangeLu).toBeCloseTo(row.analysis.loudnessRangeLu, 2);
        expect(bext.loudness.maxTruePeakDbtp).toBeCloseTo(row.analysis.truePeakDbtp, 2);
        expect(bext.loudness.maxMomentaryLufs).toBeCloseTo(row.analysis.maxMomentaryLufs, 2);
        expect(bext.loudness.maxShortTermLufs).toBeCloseTo(row.analysis.maxShortTermLufs, 2);
        // The source peaks at full scale, so the limiter reached the ceiling; measured again here.
        const measured = await analyzeFile(local.path);
        expect(measured.truePeakDbtp, format.name).toBeLessThanOrEqual(format.ceilingDbtp + 0.05);
        expect(measured.truePeakDbtp, format.name).toBeGreaterThan(format.ceilingDbtp - 1.5);
        expect(measured.integratedLufs).toBeCloseTo(row.analysis.integratedLufs, 1);
      } finally {
        await local.release();
      }
    }
  });

  it("does not make a finished delivery again when its job comes back", async () => {
    const [row] = await db("deliveries").where({ release_id: fixture.releaseId }).orderBy("created_at").limit(1);
    const id = await boss.send(settings.deliverQueue, { deliveryId: row.id });
    const [job] = await fetchJobs();
    expect(job!.id).toBe(id);
    await runDeliveryJob(job!, ctx);
    expect(await jobState(id!)).toBe("completed");
    expect(await db("deliveries").where({ id: row.id }).first()).toEqual(row);
  });

  it("queues nothing again for files already made from the same print", async () => {
    const formats = await releaseFormats(fixture.releaseId);
    expect(await makeDeliveries()).toMatchObject({ queued: 0, alreadyMade: formats.length });
    expect(await fetchJobs()).toEqual([]);
  });

  it("completes the job of a delivery that is gone (its format was deleted while it waited)", async () => {
    const [row] = await db("deliveries").where({ release_id: fixture.releaseId }).limit(1);
    const id = await boss.send(settings.deliverQueue, { deliveryId: randomUUID() });
    const [job] = await fetchJobs();
    await runDeliveryJob(job!, ctx);
    expect(await jobState(id!)).toBe("completed");
    expect(await db("deliveries").where({ id: row.id }).first()).toEqual(row);
  });

  it("fails a job that names no delivery", async () => {
    const id = await boss.send(settings.deliverQueue, { something: "else" }, { retryLimit: 0 });
    const [job] = await fetchJobs();
    await runDeliveryJob(job!, ctx);
    expect(await jobState(id!)).toBe("failed");
  });

  it("records a failure when the print is gone from storage, and leaves the try to be retried", async () => {
    await storage().delete(printKey);
    // The files made above are removed, so the print is delivered afresh.
    for (const row of await db("deliveries").where({ release_id: fixture.releaseId }).select("storage_key")) await storage().delete(row.storage_key);
    await db("deliveries").where({ release_id: fixture.releaseId }).delete();
    const { queued } = await makeDeliveries();
    expect(queued).toBeGreaterThan(0);
    const jobs = await fetchJobs();
    expect(jobs).toHaveLength(queued);
    for (const job of jobs) {
      await runDeliveryJob(job, ctx);
      // One retry is left (RENDER_JOB_RETRY_LIMIT=1).
      expect(await jobState(job.id)).toBe("retry");
      const row = await db("deliveries").where({ id: (job.data as { deliveryId: string }).deliveryId }).first();
      expect(row).toMatchObject({ state: "failed", storage_key: null });
      expect(row.error).toBeTruthy();
    }
  });
});

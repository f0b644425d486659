// A worker process killed (SIGKILL, by its pid) in the middle of a render:
// pg-boss expires the job after its time limit, a live worker retries it and
// the render completes; no row stays "running". After the last try the row
// is failed with a message an engineer can read. Short limits (a few
// seconds) keep this file quick.
import { mkdtemp, readdir, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import PgBoss from "pg-boss";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { createChain, createRevision, type ChainRevision } from "../../app/models/chain.server.ts";
import { createRender, getRenderStatus } from "../../app/models/render.server.ts";
import { queueSettings, stopQueue } from "../../app/lib/queue.server.ts";
import { createFixture, gentleChain, startWorker, uploadTestMix, waitFor, waitForRender, type Fixture, type WorkerProcess } from "../../harness/worker-harness.ts";
import type { Mix } from "../../app/models/mix.server.ts";

const queueEnv = {
  TIDEMARK_QUEUE_NAMESPACE: "test-kill",
  RENDER_JOB_RETRY_DELAY_SECONDS: "0",
  // Long enough for one whole render of the mix below on a busy machine, short enough to wait for.
  RENDER_JOB_EXPIRE_SECONDS: "8",
  ANALYZE_JOB_EXPIRE_SECONDS: "8",
};
const workerEnv: Record<string, string> = { ...queueEnv, QUEUE_MAINTENANCE_SECONDS: "1", WORKER_SWEEP_SECONDS: "1", WORKER_SHUTDOWN_GRACE_SECONDS: "0" };
Object.assign(process.env, queueEnv);

let fixture: Fixture;
let revision: ChainRevision;
let scratch: string;
let mix: Mix;
const workers: WorkerProcess[] = [];

async function start(extra: Record<string, string> = {}) {
  const worker = await startWorker({ ...workerEnv, ...extra });
  workers.push(worker);
  return worker;
}

beforeAll(async () => {
  fixture = await createFixture("worker-kill");
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-kill-test-"));
  // A killed worker leaves its temporary folder; the next worker removes it, the test's cleanup the rest.
  workerEnv.WORKER_TMP_DIR = path.join(scratch, "worker-tmp");
  const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Kill chain" });
  revision = await createRevision(chain.id, gentleChain(), fixture.userId);
  // Long enough that a render is still running a moment after it starts
  // (about a second here: the renderer runs at about 100× real time).
  mix = await uploadTestMix(fixture, scratch, "long.wav", { seconds: 90, swellHz: 0.5 });
});

afterAll(async () => {
  for (const worker of workers) await worker.stop();
  await fixture?.cleanup();
  await rm(scratch, { recursive: true, force: true });
  await stopQueue();
  await db.destroy();
});

/** Starts a render on a fresh worker (the only one) and stops it by `signal` once the render has made progress. */
async function renderAndKill(retryLimit: string, signal: NodeJS.Signals = "SIGKILL") {
  for (const worker of workers) await worker.stop();
  process.env.RENDER_JOB_RETRY_LIMIT = retryLimit;
  const victim = await start({ RENDER_JOB_RETRY_LIMIT: retryLimit });
  const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print" });
  // Running, not finished. (Progress is written twice a second, and a fast
  // machine may render the whole mix before the first write: waiting for
  // progress > 0 would make this test depend on the machine's speed.)
  await waitFor(async () => {
    const status = await getRenderStatus(render.id);
    return status?.state === "running" && status.progress < 1;
  }, 60_000, "the render to be running");
  process.kill(victim.pid, signal);
  if (signal !== "SIGKILL") {
    expect(await victim.exited).toBe(0);
    return render;
  }
  await victim.exited;
  const stranded = await getRenderStatus(render.id);
  expect(stranded?.state).toBe("running");
  return render;
}

describe("a worker killed in the middle of a job", () => {
  it("is replaced: the job is retried after its expiry and completes; no render stays running", async () => {
    const render = await renderAndKill("2");
    await start({ RENDER_JOB_RETRY_LIMIT: "2" });
    const done = await waitForRender(render.id, "done", 60_000);
    expect(done.attempts).toBe(2);
    expect(await storage().exists(done.output!.key)).toBe(true);
    // The killed worker's temporary folder was removed by its successor.
    const folders = await readdir(workerEnv.WORKER_TMP_DIR);
    expect(folders).toEqual([`tidemark-worker-${workers.at(-1)!.pid}`]);

    const settings = queueSettings();
    const boss = new PgBoss({ connectionString: settings.databaseUrl, schema: "pgboss", supervise: false, schedule: false, max: 1 });
    await boss.start();
    try {
      const job = await boss.getJobById(settings.renderQueue, done.jobId!);
      expect(job?.state).toBe("completed");
      expect(job?.retryCount).toBe(1);
    } finally {
      await boss.stop({ graceful: false, wait: true });
    }
    const running = await db("renders as r").join("mixes as m", "m.id", "r.mix_id").where({ "m.track_id": fixture.trackId, "r.state": "running" }).count<{ count: string }[]>("* as count");
    expect(Number(running[0].count)).toBe(0);
  });

  it("after its last try is failed with a message to read", async () => {
    const render = await renderAndKill("0");
    // A live worker's maintenance finds the expired job, and its sweeper the row.
    await start({ RENDER_JOB_RETRY_LIMIT: "0" });
    const failed = await waitForRender(render.id, "failed", 60_000);
    expect(failed.attempts).toBe(1);
    expect(failed.error).toMatch(/stopped without finishing after 1 attempts: the worker rendering it stopped answering or ran past its time limit of 8 s/);
    expect(failed.finishedAt).toBeInstanceOf(Date);
  });

  it("on SIGTERM hands its running render back at once; another worker completes it", async () => {
    // WORKER_SHUTDOWN_GRACE_SECONDS=0: no waiting for the render to end.
    const render = await renderAndKill("2", "SIGTERM");
    const handedBack = await getRenderStatus(render.id);
    expect(handedBack).toMatchObject({ state: "queued", progress: 0, error: "The worker stopped; the render waits for another." });
    await start({ RENDER_JOB_RETRY_LIMIT: "2" });
    const done = await waitForRender(render.id, "done", 60_000);
    expect(done.attempts).toBe(2);
  });
});

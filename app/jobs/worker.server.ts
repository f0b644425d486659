// The worker process (`npm run worker`): takes render and analysis jobs from
// the queue in PostgreSQL and runs each in a piscina thread. As many jobs at
// once as there are threads (WORKER_THREADS, default the number of cores).
// Several worker processes, on one machine or several sharing the database
// and the S3 storage, may run side by side: the queue gives each job to one
// of them. SIGTERM or SIGINT: take no new jobs, let running ones finish for
// WORKER_SHUTDOWN_GRACE_SECONDS, then hand the rest back to the queue.
import os from "node:os";
import path from "node:path";
import { existsSync } from "node:fs";
import { mkdir, readdir, rm } from "node:fs/promises";
import { Piscina } from "piscina";
import type PgBoss from "pg-boss";
import { z } from "zod";
import { db } from "../lib/db.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { startMailDelivery } from "../lib/mail/mailer.server.ts";
import { runAnalyzeJob } from "./analyze-job.server.ts";
import { runDeliveryJob } from "./delivery-job.server.ts";
import { queueSettings, startBoss } from "./queue.server.ts";
import { runRenderJob } from "./render-job.server.ts";
import { sweep } from "./sweeper.server.ts";
import type { WorkerContext } from "./worker-context.server.ts";

const env = z
  .object({
    WORKER_THREADS: z.coerce.number().int().min(1).max(64).optional(),
    QUEUE_POLL_SECONDS: z.coerce.number().min(0.1).default(1),
    // How often expired jobs are found and retried (pg-boss maintenance; shared by all processes).
    QUEUE_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).default(30),
    WORKER_SWEEP_SECONDS: z.coerce.number().min(0.5).default(5),
    WORKER_SHUTDOWN_GRACE_SECONDS: z.coerce.number().min(0).default(20),
    WORKER_TMP_DIR: z.string().min(1).default(os.tmpdir()),
    // How often the worker sends what the mail outbox holds; "off" leaves the outbox alone
    // (tests of the queue that share a database with tests of the outbox).
    MAIL_POLL_SECONDS: z.coerce.number().min(0.5).default(5),
    WORKER_MAIL_DELIVERY: z.enum(["on", "off"]).default("on"),
  })
  .parse(process.env);

const log = (message: string) => console.error(`[tidemark] worker ${process.pid}: ${message}`);
const threads = env.WORKER_THREADS ?? os.availableParallelism();
const settings = queueSettings();

/**
 * Temporary copies live in a folder per worker process. A process killed
 * outright cannot clean up, so each worker at start removes the folders of
 * processes on this machine that no longer exist.
 */
async function prepareTmpDir(base: string): Promise<string> {
  await mkdir(base, { recursive: true });
  for (const name of await readdir(base)) {
    const match = /^tidemark-worker-(\d+)$/.exec(name);
    if (!match || Number(match[1]) === process.pid) continue;
    try {
      process.kill(Number(match[1]), 0);
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code === "ESRCH") await rm(path.join(base, name), { recursive: true, force: true });
    }
  }
  const own = path.join(base, `tidemark-worker-${process.pid}`);
  await mkdir(own, { recursive: true });
  return own;
}
const tmpDir = await prepareTmpDir(env.WORKER_TMP_DIR);

const boss = await startBoss(settings, { supervise: true, maintenanceIntervalSeconds: env.QUEUE_MAINTENANCE_SECONDS, maxConnections: 2 + threads });
// The threads run the compiled task (dist/jobs, made by scripts/build-dsp.mjs) when it is there, so a
// thread starts without transpiling; a checkout not built yet falls back to the TypeScript through tsx.
const compiledTask = new URL("../../dist/jobs/render-task.js", import.meta.url);
const pool = new Piscina({
  filename: existsSync(compiledTask) ? compiledTask.href : new URL("./render-task.ts", import.meta.url).href,
  minThreads: threads,
  maxThreads: threads,
  concurrentTasksPerWorker: 1,
  idleTimeout: 60_000,
});

const running = new Set<AbortController>();
const ctx: WorkerContext = {
  boss,
  pool,
  storage: storage(),
  settings,
  tmpDir,
  track(abort) {
    running.add(abort);
    return () => running.delete(abort);
  },
};

let stopping = false;
const wakers = new Set<() => void>();
const pause = (ms: number) =>
  new Promise<void>((resolve) => {
    const done = () => {
      clearTimeout(timer);
      wakers.delete(done);
      resolve();
    };
    const timer = setTimeout(done, ms);
    wakers.add(done);
  });

async function nextJob(): Promise<{ job: PgBoss.JobWithMetadata<unknown>; kind: "analyze" | "render" | "deliver" } | undefined> {
  // Analyses first: they are short and an engineer waits for them after each upload.
  for (const [name, kind] of [[settings.analyzeQueue, "analyze"], [settings.renderQueue, "render"], [settings.deliverQueue, "deliver"]] as const) {
    const [job] = await boss.fetch<unknown>(name, { includeMetadata: true, batchSize: 1 });
    if (job) return { job, kind };
  }
  return undefined;
}

/** One of `threads` loops; each runs one job at a time, so the pool is never oversubscribed. */
async function slot(): Promise<void> {
  while (!stopping) {
    let next;
    try {
      next = await nextJob();
    } catch (error) {
      log(`fetching a job: ${(error as Error).message}`);
      await pause(env.QUEUE_POLL_SECONDS * 1000);
      continue;
    }
    if (!next) {
      await pause(env.QUEUE_POLL_SECONDS * 1000);
      continue;
    }
    const started = Date.now();
    try {
      if (next.kind === "render") await runRenderJob(next.job, ctx);
      else if (next.kind === "deliver") await runDeliveryJob(next.job, ctx);
      else await runAnalyzeJob(next.job, ctx);
      log(`${next.kind} job ${next.job.id} (try ${next.job.retryCount + 1}) ended after ${Date.now() - started} ms`);
    } catch (error) {
      // The handlers report job failures themselves; this is the database or queue failing under them.
      log(`${next.kind} job ${next.job.id}: ${(error as Error).stack ?? error}`);
    }
  }
}

const sweeper = setInterval(() => {
  sweep(settings)
    .then((result) => {
      if (result.rendersFailed + result.rendersRequeued + result.mixesFailed > 0) log(`swept ${JSON.stringify(result)}`);
    })
    .catch((error) => log(`sweep: ${(error as Error).message}`));
}, env.WORKER_SWEEP_SECONDS * 1000);

// The worker also delivers the outbox: it runs beside every web server, and
// the outbox claims rows with a lease, so several workers never send twice.
const mail = env.WORKER_MAIL_DELIVERY === "on" ? startMailDelivery(db, { intervalMs: env.MAIL_POLL_SECONDS * 1000, log }) : null;

const slots = Array.from({ length: threads }, () => slot());
log(`ready: ${threads} thread(s), queues ${settings.renderQueue} and ${settings.analyzeQueue}, storage ${ctx.storage.kind}`);

async function shutdown(signal: string): Promise<void> {
  if (stopping) return;
  stopping = true;
  log(`${signal}: taking no new jobs; ${running.size} running`);
  for (const wake of [...wakers]) wake();
  const all = Promise.all(slots);
  const graceOver = new Promise<"timeout">((resolve) => setTimeout(() => resolve("timeout"), env.WORKER_SHUTDOWN_GRACE_SECONDS * 1000).unref());
  if ((await Promise.race([all, graceOver])) === "timeout") {
    log(`handing ${running.size} unfinished job(s) back to the queue`);
    for (const abort of running) abort.abort("shutdown");
    await all;
  }
  clearInterval(sweeper);
  await mail?.stop();
  await pool.destroy();
  await boss.stop({ graceful: false, wait: true });
  await db.destroy();
  await rm(tmpDir, { recursive: true, force: true });
  log("stopped");
  process.exit(0);
}

process.on("SIGTERM", () => void shutdown("SIGTERM"));
process.on("SIGINT", () => void shutdown("SIGINT"));

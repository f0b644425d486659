// The job queue: pg-boss 10 in the application's PostgreSQL, in its own
// schema "pgboss" (pg-boss creates and migrates it on start). Three queues:
// "render" (a render row through the renderer), "analyze-mix" (a new mix
// version's analysis) and "deliver" (a delivery row through makeDelivery). A job carries only the id of its row; the row is the
// truth about its state, the job only about who may work on it and when.
//
// TIDEMARK_QUEUE_NAMESPACE gives the queues a suffix, so that test files
// running side by side against one database do not take each other's jobs.
import PgBoss from "pg-boss";
import { z } from "zod";

const settingsSchema = z.object({
  DATABASE_URL: z.string().default("postgres://postgres@127.0.0.1:54329/tidemark"),
  TIDEMARK_QUEUE_NAMESPACE: z.string().regex(/^[a-z0-9-]*$/).default(""),
  // Tries after the first one; a worker that dies costs one try.
  RENDER_JOB_RETRY_LIMIT: z.coerce.number().int().min(0).max(10).default(2),
  RENDER_JOB_RETRY_DELAY_SECONDS: z.coerce.number().int().min(0).default(10),
  // Fixed time limit instead of the one sized to the file (tests use a few seconds).
  RENDER_JOB_EXPIRE_SECONDS: z.coerce.number().int().min(1).optional(),
  ANALYZE_JOB_EXPIRE_SECONDS: z.coerce.number().int().min(1).optional(),
});

export type QueueSettings = {
  databaseUrl: string;
  renderQueue: string;
  analyzeQueue: string;
  deliverQueue: string;
  retryLimit: number;
  retryDelaySeconds: number;
  renderExpireSeconds?: number;
  analyzeExpireSeconds?: number;
};

export function queueSettings(source: Record<string, string | undefined> = process.env): QueueSettings {
  const env = settingsSchema.parse(source);
  const suffix = env.TIDEMARK_QUEUE_NAMESPACE ? `-${env.TIDEMARK_QUEUE_NAMESPACE}` : "";
  return {
    databaseUrl: env.DATABASE_URL,
    renderQueue: `render${suffix}`,
    analyzeQueue: `analyze-mix${suffix}`,
    deliverQueue: `deliver${suffix}`,
    retryLimit: env.RENDER_JOB_RETRY_LIMIT,
    retryDelaySeconds: env.RENDER_JOB_RETRY_DELAY_SECONDS,
    renderExpireSeconds: env.RENDER_JOB_EXPIRE_SECONDS,
    analyzeExpireSeconds: env.ANALYZE_JOB_EXPIRE_SECONDS,
  };
}

export type RenderJobData = { renderId: string };
export type AnalyzeJobData = { mixId: string };

export const renderJobData = z.object({ renderId: z.uuid() });
export const analyzeJobData = z.object({ mixId: z.uuid() });
/** A reference track's analysis goes through the same queue as a mix's. */
export const analyzeReferenceJobData = z.object({ referenceId: z.uuid() });
export const deliverJobData = z.object({ deliveryId: z.uuid() });

const MAX_EXPIRE_SECONDS = 23 * 3600;

/**
 * How long a job may stay active before pg-boss gives it to another worker.
 * Sized so that a render at a quarter of real time on a busy core still fits
 * (an assumption, not a measurement: the benchmark measures the real speed),
 * plus a minute for downloading from storage and uploading the result.
 */
export function expireSecondsFor(audioSeconds: number, passes = 1): number {
  // pg-boss refuses expiries of a day or more.
  return Math.min(MAX_EXPIRE_SECONDS, Math.ceil(60 + 4 * passes * Math.max(audioSeconds, 1)));
}

export type BossOptions = {
  /** Expiry and archiving run in workers; a web process only sends. */
  supervise?: boolean;
  maintenanceIntervalSeconds?: number;
  maxConnections?: number;
};

export async function startBoss(settings: QueueSettings, options: BossOptions = {}): Promise<PgBoss> {
  const boss = new PgBoss({
    connectionString: settings.databaseUrl,
    schema: "pgboss",
    application_name: "tidemark-queue",
    max: options.maxConnections ?? 4,
    supervise: options.supervise ?? false,
    schedule: false,
    maintenanceIntervalSeconds: options.maintenanceIntervalSeconds ?? 30,
  });
  boss.on("error", (error) => console.error(`[tidemark] queue: ${error.message}`));
  await boss.start();
  for (const name of [settings.renderQueue, settings.analyzeQueue, settings.deliverQueue]) {
    await boss.createQueue(name, { name, retryLimit: settings.retryLimit, retryDelay: settings.retryDelaySeconds });
  }
  return boss;
}

declare global {
  // One connection pool per process, also across development reloads.
  var __tidemarkBoss: Promise<PgBoss> | undefined;
}

/** The process's queue for sending jobs, started on first use. */
export function queue(): Promise<PgBoss> {
  globalThis.__tidemarkBoss ??= startBoss(queueSettings()).catch((error) => {
    globalThis.__tidemarkBoss = undefined;
    throw error;
  });
  return globalThis.__tidemarkBoss;
}

/** Stops the process's queue (tests, shutdown). */
export async function stopQueue(): Promise<void> {
  const pending = globalThis.__tidemarkBoss;
  globalThis.__tidemarkBoss = undefined;
  if (pending) await (await pending).stop({ graceful: false, wait: true });
}

export async function enqueueRender(renderId: string, audioSeconds: number, passes = 1): Promise<string> {
  const settings = queueSettings();
  const boss = await queue();
  const id = await boss.send(settings.renderQueue, { renderId } satisfies RenderJobData, {
    retryLimit: settings.retryLimit,
    retryDelay: settings.retryDelaySeconds,
    expireInSeconds: settings.renderExpireSeconds ?? expireSecondsFor(audioSeconds, passes),
  });
  if (!id) throw new Error("the queue refused the render job");
  return id;
}

export async function enqueueAnalyzeMix(mixId: string, audioSeconds: number): Promise<string> {
  const settings = queueSettings();
  const boss = await queue();
  const id = await boss.send(settings.analyzeQueue, { mixId } satisfies AnalyzeJobData, {
    retryLimit: settings.retryLimit,
    retryDelay: settings.retryDelaySeconds,
    // Analysis reads the file once (true peak oversampled): about one render pass.
    expireInSeconds: settings.analyzeExpireSeconds ?? expireSecondsFor(audioSeconds, 1),
  });
  if (!id) throw new Error("the queue refused the analysis job");
  return id;
}

export async function enqueueAnalyzeReference(referenceId: string, audioSeconds: number): Promise<string> {
  const settings = queueSettings();
  const boss = await queue();
  const id = await boss.send(settings.analyzeQueue, { referenceId }, {
    retryLimit: settings.retryLimit,
    retryDelay: settings.retryDelaySeconds,
    expireInSeconds: settings.analyzeExpireSeconds ?? expireSecondsFor(audioSeconds, 1),
  });
  if (!id) throw new Error("the queue refused the analysis job");
  return id;
}

/** One delivery file (a print through a delivery format): about two render passes (resample, limit). */
export async function enqueueDelivery(deliveryId: string, audioSeconds: number): Promise<string> {
  const settings = queueSettings();
  const boss = await queue();
  const id = await boss.send(settings.deliverQueue, { deliveryId }, {
    retryLimit: settings.retryLimit,
    retryDelay: settings.retryDelaySeconds,
    expireInSeconds: settings.renderExpireSeconds ?? expireSecondsFor(audioSeconds, 2),
  });
  if (!id) throw new Error("the queue refused the delivery job");
  return id;
}

export async function cancelJob(queueName: string, jobId: string): Promise<void> {
  const boss = await queue();
  await boss.cancel(queueName, jobId);
}

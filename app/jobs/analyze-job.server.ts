// One analysis job: the loudness, peaks and stereo figures of a new mix
// version, measured in a thread, saved on the mix row.
import { MessageChannel } from "node:worker_threads";
import type PgBoss from "pg-boss";
import type { LocalFile } from "../lib/storage/storage.server.ts";
import { markAnalysisFailed, markAnalysisRetrying, saveAnalysis, startAnalysis } from "../models/mix.server.ts";
import { analyzeJobData, analyzeReferenceJobData } from "./queue.server.ts";
import { runAnalyzeReferenceJob } from "./analyze-reference-job.server.ts";
import { analyzeResultSchema, type AnalyzeTask } from "./task-messages.ts";
import { readableError, type WorkerContext } from "./worker-context.server.ts";

export async function runAnalyzeJob(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext): Promise<void> {
  const queueName = ctx.settings.analyzeQueue;
  const data = analyzeJobData.safeParse(job.data);
  if (!data.success && analyzeReferenceJobData.safeParse(job.data).success) return runAnalyzeReferenceJob(job, ctx);
  if (!data.success) {
    await ctx.boss.fail(queueName, job.id, { message: "the job does not name a mix" });
    return;
  }
  const mix = await startAnalysis(data.data.mixId, job.id);
  if (!mix) {
    await ctx.boss.complete(queueName, job.id);
    return;
  }
  const abort = new AbortController();
  const untrack = ctx.track(abort);
  let input: LocalFile | undefined;
  try {
    input = await ctx.storage.localFile(mix.storageKey, ctx.tmpDir);
    const channel = new MessageChannel();
    const task: AnalyzeTask = { kind: "analyze", inputPath: input.path, port: channel.port1 };
    let raw: unknown;
    try {
      raw = await ctx.pool.run(task, { transferList: [channel.port1], signal: abort.signal });
    } finally {
      channel.port2.close();
    }
    await saveAnalysis(mix.id, analyzeResultSchema.parse(raw).analysis);
    await ctx.boss.complete(queueName, job.id);
  } catch (error) {
    const message = abort.signal.aborted ? "the worker stopped" : readableError(error);
    if (job.retryCount >= job.retryLimit) await markAnalysisFailed(mix.id, message);
    else await markAnalysisRetrying(mix.id, message);
    await ctx.boss.fail(queueName, job.id, { message });
  } finally {
    untrack();
    await input?.release();
  }
}

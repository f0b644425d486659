// One reference track's analysis (loudness, peaks, correlation, spectrum),
// measured in a thread like a mix's and saved on the reference's row. Jobs
// come through the analyze queue with `{ referenceId }`.
import { MessageChannel } from "node:worker_threads";
import type PgBoss from "pg-boss";
import type { LocalFile } from "../lib/storage/storage.server.ts";
import {
  markReferenceAnalysisFailed,
  markReferenceAnalysisRetrying,
  saveReferenceAnalysis,
  startReferenceAnalysis,
} from "../models/reference.server.ts";
import { analyzeReferenceJobData } from "./queue.server.ts";
import { analyzeResultSchema, type AnalyzeTask } from "./task-messages.ts";
import { readableError, type WorkerContext } from "./worker-context.server.ts";

export async function runAnalyzeReferenceJob(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext): Promise<void> {
  const queueName = ctx.settings.analyzeQueue;
  const data = analyzeReferenceJobData.parse(job.data);
  const reference = await startReferenceAnalysis(data.referenceId, job.id);
  if (!reference) {
    await ctx.boss.complete(queueName, job.id); // deleted meanwhile, or already done
    return;
  }
  const abort = new AbortController();
  const untrack = ctx.track(abort);
  let input: LocalFile | undefined;
  try {
    input = await ctx.storage.localFile(reference.storageKey, ctx.tmpDir);
    const channel = new MessageChannel();
    const task: AnalyzeTask = { kind: "analyze", inputPath: input.path, port: channel.port1 };
    let raw: unknown;
    try {
      raw = await ctx.pool.run(task, { transferList: [channel.port1], signal: abort.signal });
    } finally {
      channel.port2.close();
    }
    await saveReferenceAnalysis(reference.id, analyzeResultSchema.parse(raw).analysis);
    await ctx.boss.complete(queueName, job.id);
  } catch (error) {
    const message = abort.signal.aborted ? "the worker stopped" : readableError(error);
    if (job.retryCount >= job.retryLimit) await markReferenceAnalysisFailed(reference.id, message);
    else await markReferenceAnalysisRetrying(reference.id, message);
    await ctx.boss.fail(queueName, job.id, { message });
  } finally {
    untrack();
    await input?.release();
  }
}

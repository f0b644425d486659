// The measuring half of every analysis job (mixes and references): the
// stored file fetched to a local path, analysed in a thread, the outcome
// written through the target's own model functions and the job settled.
import { MessageChannel } from "node:worker_threads";
import type PgBoss from "pg-boss";
import type { LocalFile } from "../lib/storage/storage.server.ts";
import { analyzeResultSchema, type AnalyzeResult, type AnalyzeTask } from "./task-messages.ts";
import { readableError, type WorkerContext } from "./worker-context.server.ts";

/** Where an analysis comes from and goes to: the row's stored file and its three outcomes. */
export interface AnalysisTarget {
  storageKey: string;
  save(analysis: AnalyzeResult["analysis"]): Promise<unknown>;
  markFailed(message: string): Promise<unknown>;
  markRetrying(message: string): Promise<unknown>;
}

/** Measures the target's file in a thread and settles the job: saved and completed, or marked and failed (retried while tries are left). */
export async function analyzeStoredFile(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext, target: AnalysisTarget): Promise<void> {
  const queueName = ctx.settings.analyzeQueue;
  const abort = new AbortController();
  const untrack = ctx.track(abort);
  let input: LocalFile | undefined;
  try {
    input = await ctx.storage.localFile(target.storageKey, ctx.tmpDir);
    const channel = new MessageChannel();
    const task: AnalyzeTask = { kind: "analyze", inputPath: input.path, port: channel.port1 };
    let raw: unknown;
    try {
      raw = await ctx.pool.run(task, { transferList: [channel.port1], signal: abort.signal });
    } finally {
      channel.port2.close();
    }
    await target.save(analyzeResultSchema.parse(raw).analysis);
    await ctx.boss.complete(queueName, job.id);
  } catch (error) {
    const message = abort.signal.aborted ? "the worker stopped" : readableError(error);
    if (job.retryCount >= job.retryLimit) await target.markFailed(message);
    else await target.markRetrying(message);
    await ctx.boss.fail(queueName, job.id, { message });
  } finally {
    untrack();
    await input?.release();
  }
}


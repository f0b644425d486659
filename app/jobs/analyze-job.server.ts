// One analysis job: the loudness, peaks, stereo figures and spectrum of a
// stored file (a new mix version, or a reference track), measured in a
// thread and saved on its row.
import type PgBoss from "pg-boss";
import { markAnalysisFailed, markAnalysisRetrying, saveAnalysis, startAnalysis } from "../models/mix.server.ts";
import { analyzeJobData, analyzeReferenceJobData } from "./queue.server.ts";
import { runAnalyzeReferenceJob } from "./analyze-reference-job.server.ts";
import { analyzeStoredFile } from "./analyze-file.server.ts";
import type { WorkerContext } from "./worker-context.server.ts";

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
  await analyzeStoredFile(job, ctx, {
    storageKey: mix.storageKey,
    save: (analysis) => saveAnalysis(mix.id, analysis),
    markFailed: (message) => markAnalysisFailed(mix.id, message),
    markRetrying: (message) => markAnalysisRetrying(mix.id, message),
  });
}

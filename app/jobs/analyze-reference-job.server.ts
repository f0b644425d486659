// One reference track's analysis (loudness, peaks, correlation, spectrum),
// measured in a thread like a mix's and saved on the reference's row. Jobs
// come through the analyze queue with `{ referenceId }`.
import type PgBoss from "pg-boss";
import {
  markReferenceAnalysisFailed,
  markReferenceAnalysisRetrying,
  saveReferenceAnalysis,
  startReferenceAnalysis,
} from "../models/reference.server.ts";
import { analyzeStoredFile } from "./analyze-file.server.ts";
import { analyzeReferenceJobData } from "./queue.server.ts";
import type { WorkerContext } from "./worker-context.server.ts";

export async function runAnalyzeReferenceJob(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext): Promise<void> {
  const data = analyzeReferenceJobData.parse(job.data);
  const reference = await startReferenceAnalysis(data.referenceId, job.id);
  if (!reference) {
    await ctx.boss.complete(ctx.settings.analyzeQueue, job.id); // deleted meanwhile, or already done
    return;
  }
  await analyzeStoredFile(job, ctx, {
    storageKey: reference.storageKey,
    save: (analysis) => saveReferenceAnalysis(reference.id, analysis),
    markFailed: (message) => markReferenceAnalysisFailed(reference.id, message),
    markRetrying: (message) => markReferenceAnalysisRetrying(reference.id, message),
  });
}

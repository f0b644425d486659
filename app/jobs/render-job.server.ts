// One render job: claim the row (state running, one more attempt), fetch the
// mix to a local file, render in a thread with progress, store the output
// and traces (atomically, under their final keys only once complete), mark
// the row done. Failures go back to the queue for a retry, or fail the row
// with the error on the last try.
import { mkdtemp, rm } from "node:fs/promises";
import path from "node:path";
import { MessageChannel } from "node:worker_threads";
import type PgBoss from "pg-boss";
import { parseChain } from "../../dsp/chain/schema.ts";
import { db } from "../lib/db.server.ts";
import type { LocalFile } from "../lib/storage/storage.server.ts";
import type { RenderRow } from "../models/render.server.ts";
import { expireSecondsFor, renderJobData } from "./queue.server.ts";
import { watchRender } from "./render-watch.server.ts";
import { progressMessageSchema, renderResultSchema, type RenderTask } from "./task-messages.ts";
import { readableError, type AbortReason, type WorkerContext } from "./worker-context.server.ts";

export async function runRenderJob(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext): Promise<void> {
  const queueName = ctx.settings.renderQueue;
  const data = renderJobData.safeParse(job.data);
  if (!data.success) {
    await ctx.boss.fail(queueName, job.id, { message: "the job does not name a render" });
    return;
  }
  const { renderId } = data.data;
  const [row] = await db("renders")
    .where({ id: renderId })
    .whereIn("state", ["queued", "running"])
    .update({ state: "running", attempts: db.raw("attempts + 1"), started_at: db.fn.now(), finished_at: null, progress: 0, job_id: job.id })
    .returning<RenderRow[]>("*");
  if (!row) {
    // Cancelled, finished or deleted meanwhile: nothing left to do.
    await ctx.boss.complete(queueName, job.id);
    return;
  }
  const attempt = row.attempts;
  const lastTry = job.retryCount >= job.retryLimit;
  const abort = new AbortController();
  const untrack = ctx.track(abort);
  const watch = watchRender(renderId, attempt, (reason) => abort.abort(reason));
  const current = () => db("renders").where({ id: renderId, state: "running", attempts: attempt });
  let input: LocalFile | undefined;
  let folder: string | undefined;
  try {
    const mix = await db("mixes").where({ id: row.mix_id }).first<{ storage_key: string }>("storage_key");
    const revision = await db("chain_revisions").where({ id: row.chain_revision_id }).first<{ params: unknown }>("params");
    if (!mix || !revision) throw new Error("the mix or the chain revision of this render no longer exists");
    // The target this render aims at (the render's own, else the chain's) and the gain found for it before, if any.
    const parsed = parseChain(revision.params);
    const targetLufs = row.target_lufs ?? (parsed.ok ? parsed.chain.output.targetLufs : undefined) ?? null;
    const gainKey = targetLufs === null ? null : { mix_id: row.mix_id, chain_revision_id: row.chain_revision_id, target_lufs: targetLufs };
    const cached = gainKey ? await db("target_gains").where(gainKey).first<{ gain_db: number } | undefined>("gain_db") : undefined;
    input = await ctx.storage.localFile(mix.storage_key, ctx.tmpDir);
    folder = await mkdtemp(path.join(ctx.tmpDir, `render-${renderId}-`));
    const outputPath = path.join(folder, "output.wav");
    const tracesPath = path.join(folder, "traces.json");

    const channel = new MessageChannel();
    channel.port2.on("message", (message) => {
      const progress = progressMessageSchema.safeParse(message);
      if (progress.success) watch.report(progress.data.fraction);
    });
    const task: RenderTask = {
      kind: "render",
      inputPath: input.path,
      outputPath,
      tracesPath,
      chain: revision.params,
      preview: row.kind === "preview",
      region: row.region_start_s !== null && row.region_end_s !== null ? { startS: row.region_start_s, endS: row.region_end_s } : null,
      targetLufs: row.target_lufs,
      targetGainDb: cached?.gain_db ?? null,
      port: channel.port1,
    };
    let raw: unknown;
    try {
      raw = await ctx.pool.run(task, { transferList: [channel.port1], signal: abort.signal });
    } finally {
      channel.port2.close();
    }
    const result = renderResultSchema.parse(raw);
    await watch.stop();
    if (abort.signal.aborted) throw abort.signal.reason;
    if (gainKey && !cached && result.targetGainDb !== null) {
      await db("target_gains").insert({ ...gainKey, gain_db: result.targetGainDb }).onConflict(["mix_id", "chain_revision_id", "target_lufs"]).ignore();
    }

    const outputKey = `renders/${renderId}/${row.kind}.wav`;
    const tracesKey = `renders/${renderId}/traces.json`;
    const stored = await ctx.storage.put(outputKey, { filePath: outputPath }, { contentType: "audio/wav" });
    await ctx.storage.put(tracesKey, { filePath: tracesPath }, { contentType: "application/json" });
    const done = await current().update(
      {
        state: "done",
        progress: 1,
        error: null,
        finished_at: db.fn.now(),
        input_analysis: JSON.stringify(result.input),
        output_analysis: JSON.stringify(result.output),
        traces_key: tracesKey,
        peaks: result.peaks ? JSON.stringify(result.peaks) : null,
        // A preview without a region keeps the loudest stretch it found, so a re-render hears the same.
        ...(row.kind === "preview" && row.region_start_s === null && result.region
          ? { region_start_s: result.region.startS, region_end_s: result.region.endS }
          : {}),
        output_key: outputKey,
        output_size_bytes: stored.sizeBytes,
        output_sample_rate_hz: result.format.sampleRateHz,
        output_channels: result.format.channels,
        output_bit_depth: result.format.bitDepth,
        output_sample_format: result.format.sampleFormat,
      },
      ["id"],
    );
    if (done.length > 0 && row.kind === "print") await queueDeliveriesWaitingOn(renderId, ctx);
    if (done.length === 0) {
      // Cancelled while storing. A newer attempt would write the same keys, so only a cancel removes them.
      const now = await db("renders").where({ id: renderId }).first<{ state: string } | undefined>("state");
      if (!now || now.state === "cancelled") {
        await ctx.storage.delete(outputKey);
        await ctx.storage.delete(tracesKey);
      }
    }
    await ctx.boss.complete(queueName, job.id);
  } catch (error) {
    await watch.stop();
    const reason = abort.signal.aborted ? (abort.signal.reason as AbortReason) : undefined;
    if (reason === "cancelled" || reason === "gone") {
      await ctx.boss.complete(queueName, job.id);
    } else if (reason === "superseded") {
      // Another worker holds this job now; its state is not ours to change.
    } else if (reason === "shutdown") {
      await current().update({ state: "queued", progress: 0, error: "The worker stopped; the render waits for another." });
      await ctx.boss.fail(queueName, job.id, { message: "worker shut down" });
    } else {
      const message = readableError(error);
      if (lastTry) {
        await current().update({ state: "failed", error: message, finished_at: db.fn.now() });
        await db("deliveries")
          .where({ source_render_id: renderId, state: "queued" })
          .update({ state: "failed", error: `The print these files are made from failed: ${message}` });
      } else {
        await current().update({ state: "queued", progress: 0, error: `Attempt ${attempt} failed (${message}); trying again.` });
      }
      await ctx.boss.fail(queueName, job.id, { message });
    }
  } finally {
    untrack();
    await input?.release();
    if (folder) await rm(folder, { recursive: true, force: true });
  }
}

/**
 * Deliveries made while their print was still to be rendered (an approved
 * recipe without a print, see queueReleaseDeliveries) wait for it: queue them now.
 */
async function queueDeliveriesWaitingOn(renderId: string, ctx: WorkerContext): Promise<void> {
  const waiting = await db("deliveries").where({ source_render_id: renderId, state: "queued" }).select<{ id: string }[]>("id");
  const mix = await db("renders as rd").join("mixes as m", "m.id", "rd.mix_id").where("rd.id", renderId).first<{ frames: string; sample_rate_hz: number }>("m.frames", "m.sample_rate_hz");
  const audioSeconds = mix ? Number(mix.frames) / mix.sample_rate_hz : 600;
  for (const d of waiting) {
    await ctx.boss.send(ctx.settings.deliverQueue, { deliveryId: d.id }, {
      retryLimit: ctx.settings.retryLimit,
      retryDelay: ctx.settings.retryDelaySeconds,
      expireInSeconds: ctx.settings.renderExpireSeconds ?? expireSecondsFor(audioSeconds, 2),
    });
  }
}

// The worker process end to end, against the real database, queue and
// (local) storage: a worker of its own is started as a separate process.
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { createMix, getMix, newMixKey, type Mix } from "../../app/models/mix.server.ts";
import { analyzeFile } from "../../dsp/analysis.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createChain, createRevision, type ChainRevision } from "../../app/models/chain.server.ts";
import { cancelRender, createRender, getRender, getRenderStatus, getRenderTraces } from "../../app/models/render.server.ts";
import { stopQueue } from "../../app/jobs/queue.server.ts";
import { createFixture, gentleChain, startWorker, uploadTestMix, waitFor, waitForRender, type Fixture, type WorkerProcess } from "./worker-harness.ts";

const queueEnv = {
  TIDEMARK_QUEUE_NAMESPACE: "test-worker",
  RENDER_JOB_RETRY_LIMIT: "1",
  RENDER_JOB_RETRY_DELAY_SECONDS: "0",
  RENDER_JOB_EXPIRE_SECONDS: "60",
};
Object.assign(process.env, queueEnv);

let fixture: Fixture;
let worker: WorkerProcess;
let revision: ChainRevision;
let scratch: string;

beforeAll(async () => {
  fixture = await createFixture("worker");
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-worker-test-"));
  const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Low Water chain" });
  revision = await createRevision(chain.id, gentleChain(), fixture.userId);
  worker = await startWorker({ ...queueEnv, WORKER_SWEEP_SECONDS: "1", QUEUE_MAINTENANCE_SECONDS: "1" });
});

afterAll(async () => {
  await worker?.stop();
  await fixture?.cleanup();
  await rm(scratch, { recursive: true, force: true });
  await stopQueue();
  await db.destroy();
});

/** The figures an engineer compares; the short-term curve is checked through them. */
const FIGURES = ["integratedLufs", "loudnessRangeLu", "truePeakDbtp", "samplePeakDbfs", "maxMomentaryLufs", "maxShortTermLufs", "correlation"] as const;

describe("worker", () => {
  let mix: Mix;

  it("analyses an uploaded mix version in the background", async () => {
    mix = await uploadTestMix(fixture, scratch, "low-water-v1.wav", { seconds: 6, swellHz: 0.5 });
    expect(mix.analysisState).toBe("pending");
    const analysed = await waitFor(async () => {
      const now = await getMix(mix.id);
      return now?.analysisState === "done" && now;
    }, 30_000, "the analysis");
    // The same figures as the renderer's own analysis of the stored file.
    const local = await storage().localFile(mix.storageKey);
    const expected = await analyzeFile(local.path);
    await local.release();
    const analysis = analysed.analysis as Record<string, number>;
    for (const key of FIGURES) expect(analysis[key], key).toBeCloseTo(expected[key], 9);
    expect(analysis.integratedLufs).toBeLessThan(-5);
    expect(analysis.integratedLufs).toBeGreaterThan(-30);
  });

  it("renders a preview of a region to done, with an output analysis equal to an analysis of the stored file", async () => {
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "preview", region: { startS: 1, endS: 4 } });
    const done = await waitForRender(render.id, "done", 60_000);
    expect(done.attempts).toBe(1);
    expect(done.progress).toBe(1);
    expect(done.startedAt!.getTime()).toBeLessThanOrEqual(done.finishedAt!.getTime());
    const local = await storage().localFile(done.output!.key);
    try {
      const format = await probeWav(local.path);
      expect(format.frames).toBe(3 * 48_000);
      expect(done.output).toMatchObject({ sampleRateHz: 48_000, channels: 2, bitDepth: 24, sampleFormat: "int" });
      const stored = await analyzeFile(local.path);
      const output = done.outputAnalysis as Record<string, number>;
      // The renderer measures its output before writing it as 24-bit; rounding to 24 bits moves the figures by far less than 0.001 dB.
      // Its meter is pre-rolled (previews are the print): the loudness figures' windows at the region's start reach back
      // into the audio before it, as the print's meter's do, where an analysis of the file alone starts from silence.
      // The 3 s figures (short-term, range) of a 3 s file alone rest on windows mostly padded with silence, so they are not compared.
      const windowed = new Set<string>(["integratedLufs", "maxMomentaryLufs"]);
      for (const key of FIGURES) if (key !== "loudnessRangeLu" && key !== "maxShortTermLufs") expect(Math.abs(output[key] - stored[key]), key).toBeLessThan(windowed.has(key) ? 0.3 : 0.001);
      expect(output.truePeakDbtp).toBeLessThanOrEqual(-1 + 0.1);
    } finally {
      await local.release();
    }
    const traces = (await getRenderTraces(done))!;
    expect(traces.gridMs).toBe(10);
    // One gain-reduction trace list per stage that reduces gain: multiband (4 bands), compressor, limiter.
    expect(traces.stages.length).toBeGreaterThanOrEqual(3);
    for (const stage of traces.stages) for (const trace of stage.gainReductionDb) expect(trace.length).toBe(300);
  });

  it("renders a print to a loudness target within ±0.1 LU", async () => {
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print", targetLufs: -16 });
    const done = await waitForRender(render.id, "done", 90_000);
    const local = await storage().localFile(done.output!.key);
    try {
      const stored = await analyzeFile(local.path);
      expect(Math.abs(stored.integratedLufs - -16)).toBeLessThanOrEqual(0.1);
      expect((await probeWav(local.path)).frames).toBe(mix.frames);
    } finally {
      await local.release();
    }
  });

  it("a preview to the print's target takes the print's gain from the cache (target_gains) and has the print's samples over its region", async () => {
    const [print] = await db("renders").where({ mix_id: mix.id, chain_revision_id: revision.id, kind: "print", state: "done" }).select("output_key");
    const key = { mix_id: mix.id, chain_revision_id: revision.id, target_lufs: -16 };
    const cached = await db("target_gains").where(key).first<{ gain_db: number }>("gain_db");
    expect(cached, "the print stored the gain it found").toBeDefined();
    const samples = async (storageKey: string) => {
      const local = await storage().localFile(storageKey);
      try {
        const { readWav } = await import("../../dsp/render/render.test-util.ts");
        return await readWav(local.path);
      } finally {
        await local.release();
      }
    };
    const preview = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "preview", region: { startS: 1, endS: 4 }, targetLufs: -16 });
    const done = await waitForRender(preview.id, "done", 60_000);
    const [p, v] = [await samples(print.output_key), await samples(done.output!.key)];
    for (let c = 0; c < 2; c++) for (let i = 0; i < 3 * 48_000; i++) if (v[c][i] !== p[c][48_000 + i]) expect.fail(`sample ${i} of channel ${c} differs from the print's`);
    // The gain really comes from the cache: with 3 dB more there, the next preview is 3 dB louder.
    await db("target_gains").where(key).update({ gain_db: cached!.gain_db + 3 });
    const louder = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "preview", region: { startS: 1, endS: 4 }, targetLufs: -16 });
    const loud = await waitForRender(louder.id, "done", 60_000);
    const a = (done.outputAnalysis as Record<string, number>).integratedLufs, b = (loud.outputAnalysis as Record<string, number>).integratedLufs;
    expect(b - a).toBeGreaterThan(1);
    await db("target_gains").where(key).update({ gain_db: cached!.gain_db });
  });

  it("cancels a running render: it stops, stays cancelled and stores nothing", async () => {
    // Long enough (about 4 s of work with its three loudness passes) that the cancel lands mid-render.
    const long = await uploadTestMix(fixture, scratch, "low-water-long.wav", { seconds: 120, channels: 2 });
    const render = await createRender({ mixId: long.id, chainRevisionId: revision.id, kind: "print", targetLufs: -14 });
    await waitFor(async () => {
      const status = await getRenderStatus(render.id);
      return status?.state === "running" && status.progress > 0;
    }, 60_000, "the render to make progress");
    await cancelRender(render.id);
    // The worker notices within a progress write or two and frees its thread.
    await waitFor(() => worker.output().includes(`render job ${render.jobId}`), 10_000, "the worker to stop the render");
    const after = (await getRender(render.id))!;
    expect(after.state).toBe("cancelled");
    expect(after.output).toBeNull();
    expect(await storage().exists(`renders/${render.id}/print.wav`)).toBe(false);
  });

  it("fails a render whose mix file is missing after its last try, with the reason", async () => {
    const { mixId, storageKey } = newMixKey(fixture.trackId);
    const format = { sampleRateHz: 48_000, channels: 2, bitDepth: 24 as const, sampleFormat: "int" as const, frames: 48_000 };
    const mix = await createMix({ id: mixId, trackId: fixture.trackId, originalName: "missing.wav", storageKey, sizeBytes: 100, format });
    expect(await storage().exists(mix.storageKey)).toBe(false);
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print" });
    const failed = await waitFor(async () => {
      const now = await getRender(render.id);
      return now?.state === "failed" && now;
    }, 30_000, "the render to fail");
    // One try and one retry (RENDER_JOB_RETRY_LIMIT=1).
    expect(failed.attempts).toBe(2);
    expect(failed.error).toMatch(/nothing is stored under "mixes\//);
    expect(failed.finishedAt).toBeInstanceOf(Date);
    expect(failed.output).toBeNull();
  });
});

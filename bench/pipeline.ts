// Pipeline benchmark: (1) streaming a 4-minute stereo 48 kHz 24-bit WAV into
// storage (local disk, and S3 when the fake or a real endpoint is set), in
// MB/s with this process's peak memory; (2) N print renders queued at once
// and taken by one worker process with WORKER_THREADS=1, then =2: renders per
// minute and the ratio, which shows whether the thread pool scales.
// Needs the database (DATABASE_URL; `node scripts/test.mjs --services` gives one).
// TIDEMARK_BENCH_RENDERS (default 4) and TIDEMARK_BENCH_RENDER_SECONDS (default 60) size part 2.
// The upload through HTTP is not measured here: the upload route is not built yet.
// Run: npx tsx bench/pipeline.ts  (or through bench/run.ts)
import { createReadStream, readFileSync } from "node:fs";
import { mkdtemp, rm, stat } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { db } from "../app/lib/db.server.ts";
import { createStorage, type StorageDriver } from "../app/lib/storage/storage.server.ts";
import { createChain, createRevision } from "../app/models/chain.server.ts";
import { createRender, getRender } from "../app/models/render.server.ts";
import { stopQueue } from "../app/jobs/queue.server.ts";
import { createFixture, gentleChain, startWorker, uploadTestMix, waitFor, writeTestWav } from "../tests/server/worker-harness.ts";

const RENDERS = Number(process.env.TIDEMARK_BENCH_RENDERS ?? 4);
const RENDER_SECONDS = Number(process.env.TIDEMARK_BENCH_RENDER_SECONDS ?? 60);
const NAMESPACE = "bench-pipeline";

async function storageWrite(label: string, driver: StorageDriver, filePath: string): Promise<void> {
  const sizeBytes = (await stat(filePath)).size;
  const key = `bench/${Date.now()}-${label}.wav`;
  let peakRss = process.memoryUsage().rss;
  const sampler = setInterval(() => (peakRss = Math.max(peakRss, process.memoryUsage().rss)), 20);
  const rssBefore = process.memoryUsage().rss;
  const t0 = performance.now();
  // As an upload arrives: a stream of unknown length, not a file path.
  await driver.put(key, createReadStream(filePath, { highWaterMark: 64 * 1024 }), { contentType: "audio/wav" });
  const seconds = (performance.now() - t0) / 1000;
  clearInterval(sampler);
  await driver.delete(key);
  console.log(
    `storage ${label.padEnd(5)}: ${(sizeBytes / 1e6).toFixed(1)} MB in ${seconds.toFixed(2)} s = ${(sizeBytes / 1e6 / seconds).toFixed(1)} MB/s; ` +
      `peak RSS ${(peakRss / 2 ** 20).toFixed(0)} MiB (${((peakRss - rssBefore) / 2 ** 20).toFixed(0)} MiB above the start)`,
  );
}

/** CPU seconds used so far by a process and all its threads (Linux /proc; clock ticks assumed 100 Hz); undefined elsewhere. */
function cpuSeconds(pid: number): number | undefined {
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, "utf8").split(") ")[1].split(" ");
    // After "pid (comm) ": utime and stime are the 12th and 13th fields.
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return undefined;
  }
}

async function rendersPerMinute(threads: number, mixId: string, revisionId: string): Promise<number> {
  const worker = await startWorker({ TIDEMARK_QUEUE_NAMESPACE: NAMESPACE, WORKER_THREADS: String(threads), QUEUE_POLL_SECONDS: "0.2" });
  const allDone = (ids: string[]) =>
    waitFor(async () => {
      const states = await Promise.all(ids.map(async (id) => (await getRender(id))?.state));
      if (states.some((s) => s === "failed" || s === "cancelled")) throw new Error(`a render ended ${states.join(", ")}`);
      return states.every((s) => s === "done");
    }, 30 * 60_000, "the renders");
  try {
    // One short preview per thread first, so that loading the renderer into each thread is not timed.
    const warmUp: string[] = [];
    for (let i = 0; i < threads; i++) warmUp.push((await createRender({ mixId, chainRevisionId: revisionId, kind: "preview", region: { startS: 0, endS: 1 } })).id);
    await allDone(warmUp);
    const t0 = performance.now();
    const cpu0 = cpuSeconds(worker.pid);
    const ids: string[] = [];
    for (let i = 0; i < RENDERS; i++) ids.push((await createRender({ mixId, chainRevisionId: revisionId, kind: "print" })).id);
    await allDone(ids);
    const minutes = (performance.now() - t0) / 60_000;
    const cpu1 = cpuSeconds(worker.pid);
    const perMinute = RENDERS / minutes;
    // CPU time per render does not depend on what else runs on the machine; wall time does.
    const cpu = cpu0 !== undefined && cpu1 !== undefined ? `; worker CPU ${((cpu1 - cpu0) / RENDERS).toFixed(2)} s per render` : "";
    console.log(`renders, ${threads} thread(s): ${RENDERS} prints of ${RENDER_SECONDS} s in ${(minutes * 60).toFixed(1)} s = ${perMinute.toFixed(2)} renders/min${cpu} (load average ${os.loadavg()[0].toFixed(1)})`);
    return perMinute;
  } finally {
    await worker.stop();
  }
}

export async function run(): Promise<void> {
  process.env.TIDEMARK_QUEUE_NAMESPACE = NAMESPACE;
  try {
    await db.raw("select 1");
  } catch (error) {
    console.log(`pipeline: skipped, no database (${(error as Error).message}); start one with node scripts/test.mjs --services`);
    return;
  }
  const scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-bench-pipeline-"));
  const fixture = await createFixture("bench-pipeline");
  try {
    const upload = path.join(scratch, "four-minutes.wav");
    await writeTestWav(upload, { seconds: 240, sampleRate: 48_000, channels: 2, bitDepth: 24, swellHz: 0.25 });
    await storageWrite("local", createStorage({ STORAGE_DRIVER: "local", STORAGE_DIR: path.join(scratch, "storage") }), upload);
    if (process.env.S3_ENDPOINT && process.env.S3_BUCKET) await storageWrite("s3", createStorage({ ...process.env, STORAGE_DRIVER: "s3" }), upload);
    await rm(upload);

    const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Bench chain" });
    const revision = await createRevision(chain.id, gentleChain(), fixture.userId);
    const mix = await uploadTestMix(fixture, scratch, "bench-mix.wav", { seconds: RENDER_SECONDS, swellHz: 0.5 });
    console.log(`cores: ${os.availableParallelism()} (load average ${os.loadavg().map((l) => l.toFixed(1)).join(" ")})`);
    const one = await rendersPerMinute(1, mix.id, revision.id);
    const two = await rendersPerMinute(2, mix.id, revision.id);
    console.log(`scaling 2 threads / 1 thread: ${(two / one).toFixed(2)}× (2.00 would be perfect)`);
  } finally {
    await fixture.cleanup();
    await rm(scratch, { recursive: true, force: true });
    await stopQueue();
    await db.destroy();
  }
}

if (import.meta.url === pathToFileURL(process.argv[1]).href) await run();

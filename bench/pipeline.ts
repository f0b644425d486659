// Pipeline benchmark: (1) streaming a 4-minute stereo 48 kHz 24-bit WAV into
// storage (local disk, and S3 when the fake or a real endpoint is set), in
// MB/s with this process's peak memory; (2) N print renders queued at once
// and taken by one worker process with WORKER_THREADS=1, then =2: renders per
// minute and the ratio, which shows whether the thread pool scales; (3) the
// same 4-minute file uploaded through HTTP on loopback to the real upload
// route (POST /api/tracks/:trackId/mixes, raw body, X-File-Name, an API
// token) of a production build served by react-router-serve: MB/s and the
// web process's peak memory (VmHWM from /proc). Part 3 builds into
// TIDEMARK_BENCH_BUILD_DIR (default .data/build-bench) when no build is
// there; if the server cannot start it says why and the rest goes on.
// Needs the database (DATABASE_URL; `node scripts/test.mjs --services` gives one).
// TIDEMARK_BENCH_RENDERS (default 4) and TIDEMARK_BENCH_RENDER_SECONDS (default 60) size part 2.
// Run: npx tsx bench/pipeline.ts  (or through bench/run.ts)
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { createReadStream, existsSync, readFileSync } from "node:fs";
import http from "node:http";
import net from "node:net";
import { mkdtemp, rm, stat } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { db } from "../app/lib/db.server.ts";
import { createStorage, type StorageDriver } from "../app/lib/storage/storage.server.ts";
import { createChain, createRevision } from "../app/models/chain.server.ts";
import { createRender, getRender } from "../app/models/render.server.ts";
import { cancelJob, queueSettings, stopQueue } from "../app/lib/queue.server.ts";
import { createApiToken } from "../app/models/api-token.server.ts";
import { createFixture, gentleChain, root, startWorker, uploadTestMix, waitFor, writeTestWav, type Fixture } from "../harness/worker-harness.ts";

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

/** A kernel memory figure of a process in MiB (VmHWM: peak resident set; VmRSS: now), Linux only. */
function procMemoryMiB(pid: number, field: "VmHWM" | "VmRSS"): number | undefined {
  try {
    const match = new RegExp(`^${field}:\\s+(\\d+) kB`, "m").exec(readFileSync(`/proc/${pid}/status`, "utf8"));
    return match ? Number(match[1]) / 1024 : undefined;
  } catch {
    return undefined;
  }
}

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.once("error", reject);
    server.listen(0, "127.0.0.1", () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
  });
}

/** The production web server on a free port, from our own build folder (built first when missing). */
async function startWebServer(storageDir: string): Promise<{ child: ChildProcess; base: string; output: () => string }> {
  const buildDir = process.env.TIDEMARK_BENCH_BUILD_DIR ?? ".data/build-bench";
  const entry = path.join(root, buildDir, "server", "index.js");
  if (!existsSync(entry)) {
    console.log(`http upload: building into ${buildDir} first`);
    const built = spawnSync("npx", ["react-router", "build"], { cwd: root, env: { ...process.env, TIDEMARK_BUILD_DIR: buildDir }, encoding: "utf8" });
    if (built.status !== 0) throw new Error(`the build failed: ${(built.stderr || built.stdout).trim().split("\n").slice(-3).join(" / ")}`);
  }
  const port = await freePort();
  // node itself runs the serve script, so the child's pid is the web process whose memory is read.
  const serveBin = path.join(root, "node_modules", "@react-router", "serve", "bin.js");
  let log = "";
  const child = spawn(process.execPath, [serveBin, entry], {
    cwd: root,
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(port),
      HOST: "127.0.0.1",
      TIDEMARK_INSECURE_COOKIES: "1",
      SESSION_SECRET: process.env.SESSION_SECRET ?? "bench-session-secret-not-for-production",
      STORAGE_DRIVER: "local",
      STORAGE_DIR: storageDir,
      TIDEMARK_QUEUE_NAMESPACE: NAMESPACE,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  child.stdout!.on("data", (chunk) => (log += chunk));
  child.stderr!.on("data", (chunk) => (log += chunk));
  const base = `http://127.0.0.1:${port}`;
  try {
    await waitFor(async () => {
      if (child.exitCode !== null) throw new Error(`the server exited (${child.exitCode}): ${log.trim().slice(-300)}`);
      try {
        return (await fetch(`${base}/sign-in`)).ok;
      } catch {
        return false;
      }
    }, 60_000, "the web server");
  } catch (error) {
    child.kill("SIGTERM");
    throw error;
  }
  return { child, base, output: () => log };
}

function postFile(url: string, filePath: string, sizeBytes: number, headers: Record<string, string>): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const request = http.request(url, { method: "POST", headers: { ...headers, "Content-Length": String(sizeBytes) } }, (response) => {
      let body = "";
      response.setEncoding("utf8");
      response.on("data", (chunk) => (body += chunk));
      response.on("end", () => resolve({ status: response.statusCode ?? 0, body }));
    });
    request.on("error", reject);
    createReadStream(filePath, { highWaterMark: 256 * 1024 }).on("error", reject).pipe(request);
  });
}

/** Part 3: the upload through HTTP; prints why when it cannot run, and returns. */
export async function httpUpload(fixture: Fixture, filePath: string, scratch: string): Promise<void> {
  const sizeBytes = (await stat(filePath)).size;
  let server;
  try {
    server = await startWebServer(path.join(scratch, "web-storage"));
  } catch (error) {
    console.log(`http upload: skipped, the web server did not start (${(error as Error).message})`);
    return;
  }
  const { child, base } = server;
  try {
    const pid = child.pid!;
    const { token } = await createApiToken({ userId: fixture.userId, studioId: fixture.studioId, name: "bench" });
    const auth = { Authorization: `Bearer ${token}` };
    // One small request first, so that loading the route modules is not timed.
    await fetch(`${base}/api/tracks/${fixture.trackId}/mixes`, { headers: auth });
    const hwmBefore = procMemoryMiB(pid, "VmHWM");
    const rssBefore = procMemoryMiB(pid, "VmRSS");
    const t0 = performance.now();
    const response = await postFile(`${base}/api/tracks/${fixture.trackId}/mixes`, filePath, sizeBytes, {
      ...auth,
      "Content-Type": "audio/wav",
      "X-File-Name": encodeURIComponent("four minutes.wav"),
    });
    const seconds = (performance.now() - t0) / 1000;
    const hwm = procMemoryMiB(pid, "VmHWM");
    if (response.status !== 201) {
      console.log(`http upload: the server answered ${response.status}: ${response.body.slice(0, 300)}`);
      return;
    }
    const mixId = (JSON.parse(response.body) as { mix: { id: string } }).mix.id;
    // No worker reads this namespace's analyses during part 3; the job is withdrawn, the mix removed with the fixture.
    const row = await db("mixes").where({ id: mixId }).first<{ analysis_job_id: string | null }>("analysis_job_id");
    if (row?.analysis_job_id) await cancelJob(queueSettings().analyzeQueue, row.analysis_job_id).catch(() => {});
    const memory =
      hwm === undefined
        ? "peak memory not readable (no /proc)"
        : `web process peak RSS (VmHWM) ${hwm.toFixed(0)} MiB (before the upload: VmHWM ${hwmBefore?.toFixed(0)} MiB, VmRSS ${rssBefore?.toFixed(0)} MiB)`;
    console.log(`http upload  : ${(sizeBytes / 1e6).toFixed(1)} MB in ${seconds.toFixed(2)} s = ${(sizeBytes / 1e6 / seconds).toFixed(1)} MB/s through POST /api/tracks/:trackId/mixes on loopback; ${memory}`);
  } finally {
    child.kill("SIGTERM");
    await new Promise((resolve) => (child.exitCode !== null ? resolve(undefined) : child.once("exit", resolve)));
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
    await httpUpload(fixture, upload, scratch);
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

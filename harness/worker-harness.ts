// Helpers of the queue and worker tests: rows of our own (a studio with one
// track, removed afterwards), synthesized WAV files, worker processes.
import { spawn, type ChildProcess } from "node:child_process";
import { randomUUID } from "node:crypto";
import path from "node:path";
import { createWavWriter } from "../dsp/io/wav-writer.ts";
import { db } from "../app/lib/db.server.ts";
import { storage } from "../app/lib/storage/storage.server.ts";
import { addMixVersion, newMixKey, type Mix } from "../app/models/mix.server.ts";
import { getRender, type Render, type RenderState } from "../app/models/render.server.ts";
import { probeWav } from "../dsp/io/wav-reader.ts";
import { stat } from "node:fs/promises";

export const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), "..");

export type Fixture = { studioId: string; releaseId: string; trackId: string; userId: string; cleanup(): Promise<void> };

/** A studio of its own with a client, a release, one track and an engineer. */
export async function createFixture(label: string): Promise<Fixture> {
  const tag = `${label} ${randomUUID().slice(0, 8)}`;
  const [studio] = await db("studios").insert({ name: `Test studio ${tag}` }).returning("id");
  const [client] = await db("clients").insert({ studio_id: studio.id, name: `Test client ${tag}`, kind: "artist" }).returning("id");
  const [release] = await db("releases").insert({ studio_id: studio.id, client_id: client.id, title: `Test release ${tag}`, kind: "single" }).returning("id");
  const [track] = await db("tracks").insert({ release_id: release.id, position: 1, title: "Low Water" }).returning("id");
  const [user] = await db("users")
    .insert({ email: `engineer-${randomUUID()}@example.test`, name: "Test Engineer", password_hash: "not-a-hash" })
    .returning("id");
  await db("memberships").insert({ user_id: user.id, studio_id: studio.id, role: "engineer" });
  return {
    studioId: studio.id,
    releaseId: release.id,
    trackId: track.id,
    userId: user.id,
    async cleanup() {
      // The stored files of this fixture's mixes and renders, then the rows.
      const mixes = await db("mixes").where({ track_id: track.id }).select<{ id: string; storage_key: string }[]>("id", "storage_key");
      const renders = await db("renders").whereIn("mix_id", mixes.map((m) => m.id)).select<{ output_key: string | null; traces_key: string | null }[]>("output_key", "traces_key");
      for (const key of [...mixes.map((m) => m.storage_key), ...renders.flatMap((r) => [r.output_key, r.traces_key])]) {
        if (key) await storage().delete(key);
      }
      // Releases first: their client may not be deleted while they point at it.
      await db("releases").where({ studio_id: studio.id }).delete();
      await db("studios").where({ id: studio.id }).delete();
      await db("users").where({ id: user.id }).delete();
    },
  };
}

export type ToneSpec = {
  seconds: number;
  sampleRate?: number;
  channels?: 1 | 2;
  bitDepth?: 16 | 24 | 32;
  float?: boolean;
  /** Partials as [freqHz, peak amplitude]; a chord keeps every band of a multiband busy. */
  partials?: [number, number][];
  /** Amplitude swell: the level rises and falls `swellHz` times a second, so dynamics act. */
  swellHz?: number;
};

/** Writes a deterministic test signal; returns its frame count. */
export async function writeTestWav(filePath: string, spec: ToneSpec): Promise<number> {
  const sampleRate = spec.sampleRate ?? 48_000;
  const channels = spec.channels ?? 2;
  const partials = spec.partials ?? [[55, 0.25], [220, 0.2], [1_250, 0.12], [4_800, 0.08]];
  const frames = Math.round(spec.seconds * sampleRate);
  const writer = await createWavWriter(filePath, { sampleRate, channels, bitDepth: spec.bitDepth ?? 24, float: spec.float ?? false });
  const block = 4_096;
  const out = Array.from({ length: channels }, () => new Float64Array(block));
  for (let start = 0; start < frames; start += block) {
    const n = Math.min(block, frames - start);
    for (let i = 0; i < n; i++) {
      const t = (start + i) / sampleRate;
      const swell = spec.swellHz ? 0.6 + 0.4 * Math.sin(2 * Math.PI * spec.swellHz * t) : 1;
      for (let ch = 0; ch < channels; ch++) {
        let x = 0;
        // A small phase offset per channel: stereo, but well correlated.
        for (const [freqHz, amplitude] of partials) x += amplitude * Math.sin(2 * Math.PI * freqHz * t + ch * 0.3);
        out[ch][i] = x * swell;
      }
    }
    await writer.write(out, n);
  }
  await writer.close();
  return frames;
}

export type WorkerProcess = {
  pid: number;
  child: ChildProcess;
  output(): string;
  /** SIGTERM and wait for the exit. */
  stop(): Promise<void>;
  exited: Promise<number | null>;
};

/** Starts `app/jobs/worker.server.ts` as its own process (node with tsx's loader, so the pid is the worker's). */
export async function startWorker(env: Record<string, string>): Promise<WorkerProcess> {
  const child = spawn(process.execPath, ["--import", "tsx", "app/jobs/worker.server.ts"], {
    cwd: root,
    env: { ...process.env, WORKER_THREADS: "1", QUEUE_POLL_SECONDS: "0.2", WORKER_MAIL_DELIVERY: "off", ...env },
    stdio: ["ignore", "pipe", "pipe"],
  });
  let output = "";
  // TIDEMARK_TEST_WORKER_LOGS=1 shows the workers' logs while a test runs.
  const echo = process.env.TIDEMARK_TEST_WORKER_LOGS === "1";
  const collect = (chunk: Buffer) => {
    output += chunk;
    if (echo) process.stderr.write(chunk);
  };
  child.stdout!.on("data", collect);
  child.stderr!.on("data", collect);
  const exited = new Promise<number | null>((resolve) => child.on("exit", (code) => resolve(code)));
  await waitFor(async () => output.includes("ready:") || child.exitCode !== null, 30_000, "the worker to start");
  if (child.exitCode !== null) throw new Error(`the worker exited at start:\n${output}`);
  return {
    pid: child.pid!,
    child,
    output: () => output,
    exited,
    async stop() {
      if (child.exitCode === null && child.signalCode === null) child.kill("SIGTERM");
      await exited;
    },
  };
}

export async function waitFor<T>(check: () => Promise<T | undefined | false> | T | undefined | false, timeoutMs: number, what: string): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await check();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await new Promise((resolve) => setTimeout(resolve, 100));
  }
}

/** A gentle chain in the shape of dsp/chain/schema.ts: four bands, a bus compressor, a limiter at −1 dBTP. */
export function gentleChain(overrides: { ratio?: number; ceilingDbtp?: number } = {}) {
  const band = (thresholdDb: number, ratio: number, attackMs: number) => ({
    thresholdDb, ratio, kneeDb: 6, attackMs, releaseMs: "auto" as const, makeupDb: 0, rmsWindowMs: 20,
  });
  return {
    stages: [
      { type: "eq", bands: [{ shape: "highPass", freqHz: 25, gainDb: 0, q: 0.707, channel: "stereo" }] },
      { type: "multiband", crossoversHz: [90, 1000, 3000], bands: [band(-24, 1.5, 40), band(-22, 1.3, 25), band(-26, 1.6, 10), band(-28, 1.4, 5)] },
      { type: "compress", thresholdDb: -20, ratio: overrides.ratio ?? 1.5, kneeDb: 6, attackMs: 30, releaseMs: "auto", makeupDb: 0, rmsWindowMs: 20 },
      { type: "limit", inputGainDb: 2, ceilingDbtp: overrides.ceilingDbtp ?? -1, lookaheadMs: 3, releaseMs: 100, truePeak: true },
    ],
    output: { bitDepth: 24, dither: "tpdf" },
  };
}

/**
 * What an upload does, without HTTP: a synthesized WAV stored through
 * storage, read back by its header, and added as the track's next version
 * (which queues its analysis).
 */
export async function uploadTestMix(fixture: Fixture, scratch: string, name: string, spec: ToneSpec): Promise<Mix> {
  const filePath = path.join(scratch, name);
  await writeTestWav(filePath, spec);
  const { mixId, storageKey } = newMixKey(fixture.trackId);
  await storage().put(storageKey, { filePath }, { contentType: "audio/wav" });
  const format = await probeWav(filePath);
  return addMixVersion({
    id: mixId,
    trackId: fixture.trackId,
    originalName: name,
    storageKey,
    sizeBytes: (await stat(filePath)).size,
    format: {
      sampleRateHz: format.sampleRate,
      channels: format.channels,
      bitDepth: format.bitDepth as 16 | 24 | 32 | 64,
      sampleFormat: format.sampleFormat,
      frames: format.frames,
    },
    uploadedBy: fixture.userId,
  });
}

/** Waits for a render to reach `state`; fails early, with its error, if it ends otherwise. */
export async function waitForRender(renderId: string, state: RenderState, timeoutMs: number): Promise<Render> {
  return waitFor(async () => {
    const render = await getRender(renderId);
    if (!render) throw new Error(`render ${renderId} is gone`);
    if (render.state === state) return render;
    if (["done", "failed", "cancelled"].includes(render.state)) {
      throw new Error(`render ${renderId} ended ${render.state} (${render.error ?? "no error"}) instead of ${state}`);
    }
    return undefined;
  }, timeoutMs, `render ${renderId} to be ${state}`);
}

// Two worker processes and six render jobs queued at once: each job is
// rendered exactly once (one attempt per render, one log line per job over
// both workers), and both workers take part.
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { createChain, createRevision } from "../../app/models/chain.server.ts";
import { createRender, type Render } from "../../app/models/render.server.ts";
import { stopQueue } from "../../app/lib/queue.server.ts";
import { createFixture, gentleChain, startWorker, uploadTestMix, waitForRender, type Fixture, type WorkerProcess } from "../../harness/worker-harness.ts";

const queueEnv = { TIDEMARK_QUEUE_NAMESPACE: "test-pair", RENDER_JOB_RETRY_DELAY_SECONDS: "0", RENDER_JOB_EXPIRE_SECONDS: "120" };
Object.assign(process.env, queueEnv);

let fixture: Fixture;
let scratch: string;
const workers: WorkerProcess[] = [];

beforeAll(async () => {
  fixture = await createFixture("worker-pair");
  scratch = await mkdtemp(path.join(os.tmpdir(), "tidemark-pair-test-"));
});

afterAll(async () => {
  for (const worker of workers) await worker.stop();
  await fixture?.cleanup();
  await rm(scratch, { recursive: true, force: true });
  await stopQueue();
  await db.destroy();
});

describe("two worker processes", () => {
  it("render six jobs, each exactly once", async () => {
    const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Pair chain" });
    const revision = await createRevision(chain.id, gentleChain(), fixture.userId);
    const mix = await uploadTestMix(fixture, scratch, "pair.wav", { seconds: 6 });
    // Both workers polling before the jobs arrive, so neither has a head start.
    workers.push(...(await Promise.all([startWorker(queueEnv), startWorker(queueEnv)])));
    const renders: Render[] = [];
    for (let i = 0; i < 6; i++) {
      renders.push(await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: i % 2 ? "print" : "preview", region: i % 2 ? null : { startS: 1, endS: 5 } }));
    }
    const done = await Promise.all(renders.map((r) => waitForRender(r.id, "done", 120_000)));
    expect(done.map((r) => r.attempts)).toEqual([1, 1, 1, 1, 1, 1]);

    const handledBy = () => workers.map((w) => renders.filter((r) => w.output().includes(`render job ${r.jobId} `)).length);
    // A worker's log line can reach our pipe a moment after its row says done.
    await vi.waitFor(() => expect(handledBy()[0] + handledBy()[1]).toBe(6), { timeout: 10_000, interval: 100 });
    const handled = handledBy();
    expect(handled[0] + handled[1]).toBe(6);
    expect(handled[0]).toBeGreaterThan(0);
    expect(handled[1]).toBeGreaterThan(0);
  });
});

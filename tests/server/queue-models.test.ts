// The models behind the queue, against the real database and pg-boss: mix
// versions, immutable chain revisions and their differences, and a render
// created, queued and cancelled while queued (no worker runs in this file).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import PgBoss from "pg-boss";
import { db } from "../../app/lib/db.server.ts";
import { createMix, listMixVersions, newMixKey, type MixFormat } from "../../app/models/mix.server.ts";
import { ChainInvalidError, createChain, createRevision, diffParams, diffRevisions, listRevisions, listTemplates } from "../../app/models/chain.server.ts";
import { cancelRender, createRender, getRender, listRendersForTrack } from "../../app/models/render.server.ts";
import { queueSettings, stopQueue } from "../../app/lib/queue.server.ts";
import { createFixture, gentleChain, type Fixture } from "../../harness/worker-harness.ts";

process.env.TIDEMARK_QUEUE_NAMESPACE = "test-models";

const format: MixFormat = { sampleRateHz: 48_000, channels: 2, bitDepth: 24, sampleFormat: "int", frames: 48_000 * 4 };

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture("queue-models");
});
afterAll(async () => {
  await fixture.cleanup();
  await stopQueue();
  await db.destroy();
});

const newMix = (name: string) => {
  const { mixId, storageKey } = newMixKey(fixture.trackId);
  return { id: mixId, trackId: fixture.trackId, originalName: name, storageKey, sizeBytes: 1_000, format, uploadedBy: fixture.userId };
};

describe("mix versions", () => {
  it("numbers uploads v1, v2, … per track, also when they arrive at once", async () => {
    const first = await createMix(newMix("low-water-mix1.wav"));
    expect(first.version).toBe(1);
    const [a, b, c] = await Promise.all([createMix(newMix("a.wav")), createMix(newMix("b.wav")), createMix(newMix("c.wav"))]);
    expect([a.version, b.version, c.version].sort()).toEqual([2, 3, 4]);
    const versions = await listMixVersions(fixture.trackId);
    expect(versions.map((m) => m.version)).toEqual([4, 3, 2, 1]);
    expect(versions[3]).toMatchObject({ originalName: "low-water-mix1.wav", analysisState: "pending", analysis: null, durationSeconds: 4 });
  });
});

describe("chains and revisions", () => {
  it("saves revisions 1, 2, … with defaults filled in, refuses invalid parameters, and never changes a revision", async () => {
    const template = await createChain({ studioId: fixture.studioId, trackId: null, name: "Gentle lift" });
    expect((await listTemplates(fixture.studioId)).map((c) => c.id)).toEqual([template.id]);
    const r1 = await createRevision(template.id, gentleChain(), fixture.userId);
    const r2 = await createRevision(template.id, gentleChain({ ratio: 1.8, ceilingDbtp: -1.5 }), fixture.userId);
    expect([r1.revision, r2.revision]).toEqual([1, 2]);
    // The schema's default (a bypass flag) is stored, so a recall does not depend on today's defaults.
    expect((r1.params as { stages: { bypass: boolean }[] }).stages[0].bypass).toBe(false);

    const bad = { stages: [{ type: "compress", thresholdDb: -20, ratio: 0.5 }] };
    const error = await createRevision(template.id, bad, fixture.userId).catch((e) => e);
    expect(error).toBeInstanceOf(ChainInvalidError);
    expect((error as ChainInvalidError).fieldErrors).toContainEqual({ path: "stages[0] (compress).ratio", message: "must be at least 1" });
    expect((await listRevisions(template.id)).map((r) => r.revision)).toEqual([2, 1]);

    await expect(db("chain_revisions").where({ id: r1.id }).update({ params: JSON.stringify({ stages: [] }) })).rejects.toThrow(/immutable/);

    expect(await diffRevisions(r1.id, r2.id)).toEqual([
      { path: "stages[2].ratio", change: "changed", before: 1.5, after: 1.8 },
      { path: "stages[3].ceilingDbtp", change: "changed", before: -1, after: -1.5 },
    ]);
  });

  it("lists an added stage parameter by parameter, and a removed band", () => {
    const before = { stages: [{ type: "eq", bands: [{ freqHz: 100 }, { freqHz: 200 }] }] };
    const after = { stages: [{ type: "eq", bands: [{ freqHz: 100 }] }, { type: "trim", gainDb: -1 }] };
    expect(diffParams(before, after)).toEqual([
      { path: "stages[0].bands[1].freqHz", change: "removed", before: 200, after: null },
      { path: "stages[1].type", change: "added", before: null, after: "trim" },
      { path: "stages[1].gainDb", change: "added", before: null, after: -1 },
    ]);
  });

  it("keeps a track's chain within its studio", async () => {
    const other = await createFixture("queue-models-other");
    try {
      await expect(createChain({ studioId: other.studioId, trackId: fixture.trackId, name: "Wrong studio" })).rejects.toThrow(/not one of this studio/);
    } finally {
      await other.cleanup();
    }
  });
});

describe("renders in the queue", () => {
  it("queues a render with a job sized to the audio, and cancels it while queued", async () => {
    const mix = await createMix(newMix("for-render.wav"));
    const chain = await createChain({ studioId: fixture.studioId, trackId: fixture.trackId, name: "Low Water chain" });
    const revision = await createRevision(chain.id, gentleChain(), fixture.userId);
    const render = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print", targetLufs: -14, createdBy: fixture.userId });
    expect(render).toMatchObject({ state: "queued", progress: 0, attempts: 0, kind: "print", targetLufs: -14, region: null });
    expect(render.jobId).toBeTruthy();

    const settings = queueSettings();
    const boss = new PgBoss({ connectionString: settings.databaseUrl, schema: "pgboss", supervise: false, schedule: false, max: 1 });
    await boss.start();
    try {
      const job = await boss.getJobById<{ renderId: string }>(settings.renderQueue, render.jobId!);
      expect(job?.data).toEqual({ renderId: render.id });
      expect(job?.state).toBe("created");
      // 4 s of audio, four passes allowed for the loudness target: 60 + 4 × 4 × 4 s (queue.server.ts).
      const expireIn = job!.expireIn;
      expect((expireIn.hours ?? 0) * 3600 + (expireIn.minutes ?? 0) * 60 + (expireIn.seconds ?? 0)).toBe(124);

      const cancelled = await cancelRender(render.id);
      expect(cancelled).toMatchObject({ state: "cancelled" });
      expect(cancelled?.finishedAt).toBeInstanceOf(Date);
      expect((await boss.getJobById(settings.renderQueue, render.jobId!))?.state).toBe("cancelled");
      // Cancelling again changes nothing.
      expect((await cancelRender(render.id))?.state).toBe("cancelled");
    } finally {
      await boss.stop({ graceful: false, wait: true });
    }

    const preview = await createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "preview", region: { startS: 1, endS: 3 } });
    expect((await getRender(preview.id))?.region).toEqual({ startS: 1, endS: 3 });
    await expect(createRender({ mixId: mix.id, chainRevisionId: revision.id, kind: "print", region: { startS: 1, endS: 3 } })).rejects.toThrow(/whole mix/);
    const listed = await listRendersForTrack(fixture.trackId);
    expect(listed.map((r) => r.id)).toEqual([preview.id, render.id]);
    expect(listed[0].mixVersion).toBe(mix.version);
    await cancelRender(preview.id);
  });
});

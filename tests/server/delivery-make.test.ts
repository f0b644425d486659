// Making delivery files from a stored print through printDelivery: the file
// lands in storage in its format with a bext chunk (loudness, ISRC), and its
// measures are recorded. Level check against ITU-R BS.1770-4: a stereo sine
// near 1 kHz of peak amplitude A reads 20·log10(A) LUFS (a 0 dBFS 1 kHz sine
// in one channel reads −3.01 LUFS, so two channels read 0 LUFS). Only tracks
// the client approved are delivered, from the approved print.
import { randomUUID } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { bextText, makeDelivery } from "../../app/lib/delivery/make-delivery.server.ts";
import { createStorage, type StorageDriver } from "../../app/lib/storage/storage.server.ts";
import { createDelivery, latestDeliveries, queueReleaseDeliveries, studioFormats } from "../../app/models/delivery.server.ts";
import { releaseDeliveryPlan } from "../../app/models/delivery-plan.server.ts";
import { readBextFromWav } from "../../dsp/delivery/bext-wav.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
let dir: string;
let store: StorageDriver;
const renderIds: string[] = [];

/** A stored 32-bit float print at 48 kHz: a 997 Hz stereo sine of the given peak amplitude, 1.5 s, finished a minute ago. */
async function storedPrint(amplitude: number, trackId = fixture.trackId) {
  const path = join(dir, `${randomUUID()}.wav`);
  const writer = await createWavWriter(path, { sampleRate: 48000, channels: 2, bitDepth: 32, float: true });
  const frames = 72_000;
  const tone = Float64Array.from({ length: frames }, (_, i) => amplitude * Math.sin((2 * Math.PI * 997 * i) / 48000));
  await writer.write([tone, tone], frames);
  await writer.close();
  const key = `renders/${fixture.tag}/${randomUUID()}.wav`;
  await store.put(key, { filePath: path });
  const [mix] = await db("mixes")
    .insert({ track_id: trackId, version: renderIds.length + 1, original_name: "mix.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames, created_at: new Date(Date.now() - 120_000) })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: trackId, name: `Chain ${randomUUID().slice(0, 6)}` }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: key, finished_at: new Date(Date.now() - 60_000) }).returning("id");
  renderIds.push(render.id);
  return render.id as string;
}

/** The render is sent for review (30 s ago), then the client's verdict (10 s ago), or none. */
async function sendAndJudge(trackId: string, renderId: string, verdict: "approve" | "changes" | null) {
  await db("review_requests").insert({ track_id: trackId, render_id: renderId, sent_by: fixture.users.engineer.id, created_at: new Date(Date.now() - 30_000) });
  if (verdict) {
    await db("review_events").insert({ track_id: trackId, render_id: renderId, kind: verdict, note: verdict === "changes" ? "Less bright, please" : null, user_id: fixture.users.client.id, created_at: new Date(Date.now() - 10_000) });
  }
}

beforeAll(async () => {
  fixture = await createFixture();
  dir = await mkdtemp(join(tmpdir(), "tidemark-make-delivery-"));
  store = createStorage({ STORAGE_DRIVER: "local", STORAGE_DIR: join(dir, "storage") });
  await db("tracks").where({ id: fixture.trackId }).update({ title: "Brise côtière", isrc: "ZZQ1X2612345" });
});

afterAll(async () => {
  if (fixture) await db("renders").whereIn("id", renderIds).delete();
  await destroyFixture(fixture);
  if (dir) await rm(dir, { recursive: true, force: true });
  await db.destroy();
});

describe("making deliveries", () => {
  it("prints both default formats from one print, level-true, with bext loudness and ISRC", async () => {
    const amplitude = 0.25;
    const printId = await storedPrint(amplitude);
    const formats = await studioFormats(fixture.studioId);
    for (const format of formats) {
      const id = await createDelivery({ trackId: fixture.trackId, formatId: format.id, sourceRenderId: printId });
      const made = await makeDelivery(id, { storage: store });
      expect(made.warnings, format.name).toEqual([]);
      const row = await db("deliveries").where({ id }).first();
      expect(row).toMatchObject({ state: "done", storage_key: `deliveries/${fixture.releaseId}/${id}.wav` });
      // BS.1770-4: 20·log10(0.25) = −12.04 LUFS; resampling and dither move it by far less than 0.1 LU.
      expect(row.analysis.integratedLufs).toBeCloseTo(20 * Math.log10(amplitude), 1);
      expect(row.analysis.truePeakDbtp).toBeLessThan(-11.5);

      const local = await store.localFile(row.storage_key);
      try {
        const wav = await probeWav(local.path);
        expect(wav).toMatchObject({ sampleRate: format.sampleRate, bitDepth: format.bitDepth, sampleFormat: "int", channels: 2 });
        // printDelivery keeps the length: round(frames × rate ratio).
        expect(wav.frames).toBe(Math.round((72_000 * format.sampleRate) / 48000));
        const bext = (await readBextFromWav(local.path))!;
        expect(bext.isrc).toBe("ZZQ1X2612345");
        expect(bext.loudness.integratedLufs).toBeCloseTo(row.analysis.integratedLufs, 2);
        expect(bext.description).toBe(`Fixture EP ${fixture.tag} - 1. Brise cotiere - ${format.name}`);
        expect(bext.originatorReference).toBe(id.replaceAll("-", ""));
      } finally {
        await local.release();
      }
    }
  });

  it("holds a full-scale print to the format's ceiling", async () => {
    const printId = await storedPrint(1);
    const [streaming] = await studioFormats(fixture.studioId);
    const id = await createDelivery({ trackId: fixture.trackId, formatId: streaming!.id, sourceRenderId: printId });
    const made = await makeDelivery(id, { storage: store });
    const row = await db("deliveries").where({ id }).first();
    expect(row.analysis.truePeakDbtp).toBeLessThanOrEqual(streaming!.ceilingDbtp + 0.05);
    expect(made.warnings).toEqual([]);
  });

  it("records a failure when the print is not in storage", async () => {
    const printId = await storedPrint(0.5);
    await db("renders").where({ id: printId }).update({ output_key: `renders/${fixture.tag}/missing.wav` });
    const [streaming] = await studioFormats(fixture.studioId);
    const id = await createDelivery({ trackId: fixture.trackId, formatId: streaming!.id, sourceRenderId: printId });
    await expect(makeDelivery(id, { storage: store })).rejects.toThrow();
    expect(await db("deliveries").where({ id }).first()).toMatchObject({ state: "failed", storage_key: null });
  });

  it("queues every approved track × format from the approved print, and says why the others are left out", async () => {
    // Track 1: two prints, the older one approved — the approved one is delivered, not the newest.
    const approvedPrint = await storedPrint(0.3);
    await storedPrint(0.4);
    await sendAndJudge(fixture.trackId, approvedPrint, "approve");
    // Track 2: a print sent, no verdict yet. Track 3: changes asked. Track 4: no render at all.
    const [sent, changes, bare] = await db("tracks")
      .insert([2, 3, 4].map((position) => ({ release_id: fixture.releaseId, position, title: `Track ${position}` })))
      .returning("id");
    await sendAndJudge(sent.id, await storedPrint(0.3, sent.id), null);
    await sendAndJudge(changes.id, await storedPrint(0.3, changes.id), "changes");

    const { deliveryIds, leftOut } = await queueReleaseDeliveries(fixture.releaseId);
    expect(deliveryIds).toHaveLength(2);
    const rows = await db("deliveries").whereIn("id", deliveryIds);
    expect(rows.map((r) => r.source_render_id)).toEqual([approvedPrint, approvedPrint]);
    expect(leftOut.map((t) => [t.trackId, t.review])).toEqual([
      [sent.id, "sent"],
      [changes.id, "changes_asked"],
      [bare.id, "in_progress"],
    ]);
    expect(leftOut[0]!.reason).toMatch(/not given a verdict/);
    expect(leftOut[1]!.reason).toMatch(/asked for changes.*“Less bright, please”/);
    expect(leftOut[2]!.reason).toMatch(/nothing has been sent/);

    for (const id of deliveryIds) await makeDelivery(id, { storage: store });
    const latest = await latestDeliveries(fixture.releaseId);
    expect(latest.filter((d) => deliveryIds.includes(d.id))).toHaveLength(2);
    for (const d of latest.filter((x) => deliveryIds.includes(x.id))) expect(d.analysis.integratedLufs).toBeCloseTo(20 * Math.log10(0.3), 1);
    await db("tracks").whereIn("id", [sent.id, changes.id, bare.id]).delete();
  });

  it("delivers an approved preview from the print of the same mix and chain, and renders that print when there is none", async () => {
    const [track] = await db("tracks").insert({ release_id: fixture.releaseId, position: 5, title: "Preview approved" }).returning("id");
    const print = await storedPrint(0.3, track.id);
    const source = await db("renders").where({ id: print }).first();
    // A preview of the same mix version through the same chain revision, approved by the client.
    const [preview] = await db("renders")
      .insert({ mix_id: source.mix_id, chain_revision_id: source.chain_revision_id, kind: "preview", state: "done", output_key: `${source.output_key}.preview`, region_start_s: 0, region_end_s: 1, finished_at: new Date(Date.now() - 50_000) })
      .returning("id");
    renderIds.push(preview.id);
    await sendAndJudge(track.id, preview.id, "approve");
    const plan = await releaseDeliveryPlan(fixture.releaseId);
    expect(plan.find((p) => p.trackId === track.id)).toMatchObject({ review: "approved", sourceRenderId: print, reason: null });

    // A different loudness target is a different master: no print stands for the preview.
    await db("renders").where({ id: print }).update({ target_lufs: -14 });
    const without = (await releaseDeliveryPlan(fixture.releaseId)).find((p) => p.trackId === track.id)!;
    expect(without).toMatchObject({ review: "approved", sourceRenderId: null, reason: null, printInProgressId: null });
    expect(without.printRecipe).toEqual({ mixId: source.mix_id, chainRevisionId: source.chain_revision_id, targetLufs: null });
    // Making the deliveries renders that print (exactly the approved recipe); the track's files wait for it.
    const made = await queueReleaseDeliveries(fixture.releaseId);
    expect(made.printsQueued).toBe(1);
    const newPrint = await db("renders").where({ mix_id: source.mix_id, chain_revision_id: source.chain_revision_id, kind: "print" }).whereNull("target_lufs").first();
    renderIds.push(newPrint.id);
    expect(newPrint.state).toMatch(/queued|failed/);
    const waiting = await db("deliveries").whereIn("id", made.waitingOnPrint);
    expect(waiting.length).toBeGreaterThan(0);
    expect(new Set(waiting.map((d) => d.source_render_id))).toEqual(new Set([newPrint.id]));
    expect(made.deliveryIds).toEqual([]);
    // A second click finds the print on its way: no second print.
    expect((await queueReleaseDeliveries(fixture.releaseId)).printsQueued).toBe(0);
    await db("deliveries").whereIn("id", made.waitingOnPrint).delete();
    await db("tracks").where({ id: track.id }).delete();
  });

  it("keeps bext text to printable ASCII within the field", () => {
    expect(bextText("Écume — nuit", 40)).toBe("Ecume ? nuit");
    expect(bextText("x".repeat(40), 32)).toHaveLength(32);
  });
});

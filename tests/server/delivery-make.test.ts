// Making delivery files from a stored print through printDelivery: the file
// lands in storage in its format with a bext chunk (loudness, ISRC), and its
// measures are recorded. Level check against ITU-R BS.1770-4: a stereo sine
// near 1 kHz of peak amplitude A reads 20·log10(A) LUFS (a 0 dBFS 1 kHz sine
// in one channel reads −3.01 LUFS, so two channels read 0 LUFS).
import { randomUUID } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { bextText, makeDelivery } from "../../app/lib/delivery/make-delivery.server.ts";
import { createStorage, type StorageDriver } from "../../app/lib/storage/storage.server.ts";
import { createDelivery, latestDeliveries, queueReleaseDeliveries, studioFormats } from "../../app/models/delivery.server.ts";
import { readBextFromWav } from "../../dsp/delivery/bext-wav.ts";
import { probeWav } from "../../dsp/io/wav-reader.ts";
import { createWavWriter } from "../../dsp/io/wav-writer.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
let dir: string;
let store: StorageDriver;
const renderIds: string[] = [];

/** A stored 32-bit float print at 48 kHz: a 997 Hz stereo sine of the given peak amplitude, 1.5 s. */
async function storedPrint(amplitude: number) {
  const path = join(dir, `${randomUUID()}.wav`);
  const writer = await createWavWriter(path, { sampleRate: 48000, channels: 2, bitDepth: 32, float: true });
  const frames = 72_000;
  const tone = Float64Array.from({ length: frames }, (_, i) => amplitude * Math.sin((2 * Math.PI * 997 * i) / 48000));
  await writer.write([tone, tone], frames);
  await writer.close();
  const key = `renders/${fixture.tag}/${randomUUID()}.wav`;
  await store.put(key, { filePath: path });
  const [mix] = await db("mixes")
    .insert({ track_id: fixture.trackId, version: renderIds.length + 1, original_name: "mix.wav", storage_key: `mixes/${randomUUID()}.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: fixture.trackId, name: `Chain ${randomUUID().slice(0, 6)}` }).returning("id");
  const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 1, params: JSON.stringify({ stages: [] }) }).returning("id");
  const [render] = await db("renders").insert({ mix_id: mix.id, chain_revision_id: rev.id, kind: "print", state: "done", output_key: key }).returning("id");
  renderIds.push(render.id);
  return render.id as string;
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

  it("queues every track × format from each track's newest finished print", async () => {
    const newest = await storedPrint(0.3);
    const [second] = await db("tracks").insert({ release_id: fixture.releaseId, position: 2, title: "No print yet" }).returning("id");
    const { deliveryIds, tracksWithoutPrint } = await queueReleaseDeliveries(fixture.releaseId);
    expect(tracksWithoutPrint).toEqual([second.id]);
    expect(deliveryIds).toHaveLength(2);
    const rows = await db("deliveries").whereIn("id", deliveryIds);
    expect(rows.map((r) => r.source_render_id)).toEqual([newest, newest]);
    for (const id of deliveryIds) await makeDelivery(id, { storage: store });
    const latest = await latestDeliveries(fixture.releaseId);
    expect(latest.filter((d) => deliveryIds.includes(d.id))).toHaveLength(2);
    for (const d of latest.filter((x) => deliveryIds.includes(x.id))) expect(d.analysis.integratedLufs).toBeCloseTo(20 * Math.log10(0.3), 1);
  });

  it("keeps bext text to printable ASCII within the field", () => {
    expect(bextText("Écume — nuit", 40)).toBe("Ecume ? nuit");
    expect(bextText("x".repeat(40), 32)).toHaveLength(32);
  });
});

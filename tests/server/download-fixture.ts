// A mix version and a finished render on a track, with files in storage,
// for the download and authorisation tests. The rows are written directly
// (no worker): these tests are about who may fetch which bytes and how.
import { randomBytes } from "node:crypto";
import { db } from "../../app/lib/db.server.ts";
import { storage } from "../../app/lib/storage/storage.server.ts";
import { createChain, createRevision } from "../../app/models/chain.server.ts";
import { createMix, newMixKey } from "../../app/models/mix.server.ts";
import { gentleChain } from "./worker-harness.ts";

export type StoredRender = { mixId: string; renderId: string; mixBytes: Buffer; outputBytes: Buffer; cleanup(): Promise<void> };

export async function addStoredRender(input: { studioId: string; trackId: string; mixBytes?: Buffer; outputBytes?: Buffer }): Promise<StoredRender> {
  const mixBytes = input.mixBytes ?? randomBytes(10_000);
  // A valid WAV header (16-bit mono, 44.1 kHz) over random audio: the unpaid-print stretch reads the header.
  const outputBytes = input.outputBytes ?? wavHeaderOver(randomBytes(20_000));
  const { mixId, storageKey } = newMixKey(input.trackId);
  await storage().put(storageKey, mixBytes, { contentType: "audio/wav" });
  await createMix({
    id: mixId,
    trackId: input.trackId,
    originalName: "fixture.wav",
    storageKey,
    sizeBytes: mixBytes.length,
    format: { sampleRateHz: 48_000, channels: 2, bitDepth: 24, sampleFormat: "int", frames: 1_000 },
  });
  const chain = await createChain({ studioId: input.studioId, trackId: input.trackId, name: "Fixture chain" });
  const revision = await createRevision(chain.id, gentleChain(), null);
  const [render] = await db("renders").insert({ mix_id: mixId, chain_revision_id: revision.id, kind: "print" }).returning("id");
  const outputKey = `renders/${render.id}/print.wav`;
  await storage().put(outputKey, outputBytes, { contentType: "audio/wav" });
  await db("renders").where({ id: render.id }).update({
    state: "done",
    progress: 1,
    finished_at: db.fn.now(),
    output_key: outputKey,
    output_size_bytes: outputBytes.length,
    output_sample_rate_hz: 48_000,
    output_channels: 2,
    output_bit_depth: 24,
    output_sample_format: "int",
  });
  return {
    mixId,
    renderId: render.id,
    mixBytes,
    outputBytes,
    async cleanup() {
      // The render first: its revision may not go while a render points at it.
      await db("renders").where({ id: render.id }).delete();
      await storage().delete(storageKey);
      await storage().delete(outputKey);
    },
  };
}

function wavHeaderOver(data: Buffer): Buffer {
  const header = Buffer.alloc(44);
  header.write("RIFF", 0);
  header.writeUInt32LE(36 + data.length, 4);
  header.write("WAVEfmt ", 8);
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20);
  header.writeUInt16LE(1, 22);
  header.writeUInt32LE(44_100, 24);
  header.writeUInt32LE(88_200, 28);
  header.writeUInt16LE(2, 32);
  header.writeUInt16LE(16, 34);
  header.write("data", 36);
  header.writeUInt32LE(data.length, 40);
  return Buffer.concat([header, data]);
}

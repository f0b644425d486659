// Makes one delivery file: the track's print (from storage) through
// printDelivery (resample, true-peak limit at the format's ceiling, dither
// when the word length drops, bext with loudness and ISRC), stored under
// deliveries/<release>/<delivery>.wav, then recorded with its measures and
// warnings. The print is read from a local copy and the result written to a
// temporary folder, so nothing is held in memory whole.
import { mkdtemp, rm } from "node:fs/promises";
import { tmpdir } from "node:os";
import { join } from "node:path";
import type { Knex } from "knex";
import { printDelivery } from "../../../dsp/delivery/print-format.ts";
import { probeWav } from "../../../dsp/io/wav-reader.ts";
import { db } from "../db.server.ts";
import { storage as sharedStorage, type StorageDriver } from "../storage/storage.server.ts";
import { completeDelivery, failDelivery } from "../../models/delivery.server.ts";
import type { NamedDeliveryFormat } from "./default-formats.ts";

/** bext text fields hold printable ASCII only: accents are dropped, anything else becomes "?". */
export function bextText(text: string, maxChars: number): string {
  const ascii = text
    .normalize("NFKD")
    .replace(/[\u0300-\u036f]/g, "")
    .replace(/[^\x20-\x7e]/g, "?");
  return ascii.slice(0, maxChars);
}

type Job = {
  id: string;
  state: string;
  format: NamedDeliveryFormat;
  release_id: string;
  release_title: string;
  studio_name: string;
  position: number;
  title: string;
  isrc: string | null;
  output_key: string | null;
  render_state: string;
  kind: string;
};

export async function makeDelivery(deliveryId: string, options: { storage?: StorageDriver; conn?: Knex } = {}): Promise<{ storageKey: string; warnings: string[] }> {
  const conn = options.conn ?? db;
  const store = options.storage ?? sharedStorage();
  const job = await conn("deliveries as d")
    .join("tracks as t", "t.id", "d.track_id")
    .join("releases as r", "r.id", "d.release_id")
    .join("studios as s", "s.id", "r.studio_id")
    .join("renders as p", "p.id", "d.source_render_id")
    .where("d.id", deliveryId)
    .first<Job | undefined>(
      "d.id",
      "d.state",
      "d.format",
      "d.release_id",
      "r.title as release_title",
      "s.name as studio_name",
      "t.position",
      "t.title",
      "t.isrc",
      "p.output_key",
      "p.state as render_state",
      "p.kind",
    );
  if (!job) throw new Error("no such delivery");
  if (job.state === "done") throw new Error("the delivery is already made");
  if (job.kind !== "print" || job.render_state !== "done" || !job.output_key) {
    const message = "the source is not a finished print";
    await failDelivery(deliveryId, message, conn);
    throw new Error(message);
  }
  await conn("deliveries").where({ id: deliveryId }).update({ state: "running", error: null });
  const dir = await mkdtemp(join(tmpdir(), "tidemark-delivery-"));
  const source = await store.localFile(job.output_key).catch(async (error: Error) => {
    await failDelivery(deliveryId, error.message, conn);
    await rm(dir, { recursive: true, force: true });
    throw error;
  });
  try {
    const outPath = join(dir, "delivery.wav");
    const result = await printDelivery(source.path, outPath, job.format, {
      description: bextText(`${job.release_title} - ${job.position}. ${job.title} - ${job.format.name}`, 256),
      originator: bextText(job.studio_name, 32),
      // The delivery id without hyphens is exactly the field's 32 characters.
      originatorReference: deliveryId.replaceAll("-", ""),
      isrc: job.isrc,
    });
    const file = await probeWav(outPath);
    const storageKey = `deliveries/${job.release_id}/${deliveryId}.wav`;
    const stored = await store.put(storageKey, { filePath: outPath }, { contentType: "audio/wav" });
    const a = result.analysis;
    const warnings = await completeDelivery(
      deliveryId,
      {
        storageKey,
        sizeBytes: stored.sizeBytes,
        analysis: {
          integratedLufs: a.integratedLufs,
          loudnessRangeLu: a.loudnessRangeLu,
          truePeakDbtp: a.truePeakDbtp,
          reconstructedPeakDb: a.reconstructedPeakDb,
          samplePeakDbfs: a.samplePeakDbfs,
          maxMomentaryLufs: a.maxMomentaryLufs,
          maxShortTermLufs: a.maxShortTermLufs,
          correlation: a.correlation,
          gainDb: result.gainDb,
          passes: result.passes,
          dithered: result.dithered,
          frames: result.frames,
        },
        file: { sampleRate: file.sampleRate, bitDepth: file.bitDepth, sampleFormat: file.sampleFormat },
      },
      conn,
    );
    return { storageKey, warnings };
  } catch (error) {
    await failDelivery(deliveryId, (error as Error).message, conn);
    throw error;
  } finally {
    await source.release();
    await rm(dir, { recursive: true, force: true });
  }
}

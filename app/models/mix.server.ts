// Versions of a track's mix. Every upload is a new version (max + 1, under a
// lock on the track so two uploads at once get v3 and v4, never two v3s);
// nothing here overwrites a stored file.
import { randomUUID } from "node:crypto";
import { createWriteStream } from "node:fs";
import { mkdtemp, rm, stat } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { Transform, type Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { analysisStateOf } from "./analysis-state.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { checkWavSamples, probeWav, WavFormatError, type WavFormatErrorCode } from "../../dsp/io/wav-reader.ts";
import { enqueueAnalyzeMix } from "../jobs/queue.server.ts";

export type MixFormat = {
  sampleRateHz: number;
  channels: number;
  bitDepth: 16 | 24 | 32 | 64;
  sampleFormat: "int" | "float";
  frames: number;
};

export type AnalysisState = "pending" | "running" | "done" | "failed";

export type Mix = MixFormat & {
  id: string;
  trackId: string;
  version: number;
  originalName: string;
  storageKey: string;
  sizeBytes: number;
  durationSeconds: number;
  analysis: unknown;
  analysisState: AnalysisState;
  analysisError: string | null;
  uploadedBy: string | null;
  createdAt: Date;
};

type MixRow = {
  id: string;
  track_id: string;
  version: number;
  original_name: string;
  storage_key: string;
  size_bytes: string | number;
  sample_rate_hz: number;
  channels: number;
  bit_depth: 16 | 24 | 32 | 64;
  sample_format: "int" | "float";
  frames: string | number;
  analysis: unknown;
  analysis_state: AnalysisState;
  analysis_error: string | null;
  uploaded_by: string | null;
  created_at: Date;
};

const columns = [
  "id", "track_id", "version", "original_name", "storage_key", "size_bytes", "sample_rate_hz", "channels", "bit_depth",
  "sample_format", "frames", "analysis", "analysis_state", "analysis_error", "uploaded_by", "created_at",
];

function fromRow(row: MixRow): Mix {
  const frames = Number(row.frames);
  return {
    id: row.id,
    trackId: row.track_id,
    version: row.version,
    originalName: row.original_name,
    storageKey: row.storage_key,
    sizeBytes: Number(row.size_bytes),
    sampleRateHz: row.sample_rate_hz,
    channels: row.channels,
    bitDepth: row.bit_depth,
    sampleFormat: row.sample_format,
    frames,
    durationSeconds: frames / row.sample_rate_hz,
    analysis: row.analysis,
    analysisState: row.analysis_state,
    analysisError: row.analysis_error,
    uploadedBy: row.uploaded_by,
    createdAt: row.created_at,
  };
}

/**
 * An id and storage key for a mix about to be uploaded: the file is stored
 * first (streamed), checked, and only then given a row with this id.
 */
export function newMixKey(trackId: string): { mixId: string; storageKey: string } {
  const mixId = randomUUID();
  return { mixId, storageKey: `mixes/${trackId}/${mixId}.wav` };
}

export type NewMix = {
  id?: string;
  trackId: string;
  originalName: string;
  storageKey: string;
  sizeBytes: number;
  format: MixFormat;
  uploadedBy?: string | null;
};

/** Inserts the next version of the track's mix. */
export async function createMix(input: NewMix, trx?: Knex.Transaction): Promise<Mix> {
  const run = async (t: Knex.Transaction) => {
    const track = await t("tracks").where({ id: input.trackId }).forUpdate().first("id");
    if (!track) throw new Error(`track ${input.trackId} does not exist`);
    const { max } = (await t("mixes").where({ track_id: input.trackId }).max<{ max: number | null }>("version as max").first()) ?? { max: null };
    const [row] = await t("mixes")
      .insert({
        id: input.id,
        track_id: input.trackId,
        version: (max ?? 0) + 1,
        original_name: input.originalName,
        storage_key: input.storageKey,
        size_bytes: input.sizeBytes,
        sample_rate_hz: input.format.sampleRateHz,
        channels: input.format.channels,
        bit_depth: input.format.bitDepth,
        sample_format: input.format.sampleFormat,
        frames: input.format.frames,
        uploaded_by: input.uploadedBy ?? null,
      })
      .returning<MixRow[]>(columns);
    return fromRow(row);
  };
  return trx ? run(trx) : db.transaction(run);
}

/** Creates the version and queues its analysis; the mix shows "pending" until a worker takes it. */
export async function addMixVersion(input: NewMix): Promise<Mix> {
  const mix = await createMix(input);
  try {
    const jobId = await enqueueAnalyzeMix(mix.id, mix.durationSeconds);
    await db("mixes").where({ id: mix.id }).update({ analysis_job_id: jobId });
  } catch (error) {
    await markAnalysisFailed(mix.id, `the analysis could not be queued: ${(error as Error).message}`);
    return (await getMix(mix.id))!;
  }
  return mix;
}

export async function getMix(id: string): Promise<Mix | undefined> {
  const row = await db("mixes").where({ id }).first<MixRow | undefined>(columns);
  return row && fromRow(row);
}

/**
 * A track's versions, newest first, with their analyses' figures (the
 * short-term loudness curve, thousands of numbers, is left out; getMix has it).
 */
export async function listMixVersions(trackId: string): Promise<Mix[]> {
  const rows = await db("mixes")
    .where({ track_id: trackId })
    .orderBy("version", "desc")
    .select<MixRow[]>([...columns.filter((c) => c !== "analysis"), db.raw("analysis - 'shortTermLufs' AS analysis")]);
  return rows.map(fromRow);
}

const mixAnalysis = analysisStateOf("mixes");

/** Claims the analysis for a worker; undefined when there is nothing (left) to do. */
export async function startAnalysis(id: string, jobId: string): Promise<Mix | undefined> {
  const row = await mixAnalysis.claim<MixRow>(id, jobId, columns);
  return row && fromRow(row);
}

export const saveAnalysis = mixAnalysis.save;
export const markAnalysisFailed = mixAnalysis.markFailed;
export const markAnalysisRetrying = mixAnalysis.markRetrying;

/** 2 GB (the default); UPLOAD_MAX_BYTES overrides. */
export const DEFAULT_UPLOAD_MAX_BYTES = 2 * 1000 ** 3;

export function uploadMaxBytes(): number {
  const configured = Number(process.env.UPLOAD_MAX_BYTES);
  return Number.isFinite(configured) && configured > 0 ? configured : DEFAULT_UPLOAD_MAX_BYTES;
}

/** An upload refused for its content; the route answers 422 with `message`. */
export class MixUploadError extends Error {
  constructor(readonly code: WavFormatErrorCode | "too-large" | "empty", message: string) {
    super(message);
    this.name = "MixUploadError";
  }
}

const formatSize = (bytes: number) =>
  bytes >= 1e9 ? `${(bytes / 1e9).toFixed(1)} GB` : bytes >= 1e6 ? `${(bytes / 1e6).toFixed(0)} MB` : `${(bytes / 1e3).toFixed(0)} kB`;

/**
 * Spools an upload to `spooled` (never whole in memory, stopped at
 * `maxBytes`) and recognises it by its WAV header, not its name; a refused
 * file throws MixUploadError. Mixes and reference tracks share it, so both
 * refuse the same files with the same words.
 */
export async function spoolWav(body: Readable | AsyncIterable<Uint8Array>, spooled: string, maxBytes: number) {
  let received = 0;
  const limit = new Transform({
    transform(chunk: Buffer, _encoding, done) {
      received += chunk.length;
      if (received > maxBytes) done(new MixUploadError("too-large", `the file is larger than the limit of ${formatSize(maxBytes)}`));
      else done(null, chunk);
    },
  });
  await pipeline(body, limit, createWriteStream(spooled));
  const sizeBytes = (await stat(spooled)).size;
  if (sizeBytes === 0) throw new MixUploadError("empty", "the file is empty");
  try {
    const format = await probeWav(spooled);
    // A float file of NaN or infinite samples would fail every analysis: refused here, naming the first.
    await checkWavSamples(spooled);
    return { sizeBytes, format };
  } catch (error) {
    if (error instanceof WavFormatError) throw new MixUploadError(error.code, error.message);
    throw error;
  }
}

/**
 * An uploaded file, as it streams in, becomes the track's next mix version:
 * spooled to a temporary file (never whole in memory, and stopped at
 * `maxBytes`), recognised by its WAV header (not its name), stored, given its
 * row, and its analysis queued. A refused file throws MixUploadError and
 * leaves no row and nothing in storage.
 */
export async function addUploadedMix(input: {
  trackId: string;
  originalName: string;
  body: Readable | AsyncIterable<Uint8Array>;
  uploadedBy?: string | null;
  maxBytes?: number;
}): Promise<Mix> {
  const maxBytes = input.maxBytes ?? uploadMaxBytes();
  const folder = await mkdtemp(path.join(process.env.UPLOAD_TMP_DIR ?? os.tmpdir(), "tidemark-upload-"));
  const spooled = path.join(folder, "upload.wav");
  try {
    const { sizeBytes, format } = await spoolWav(input.body, spooled, maxBytes);
    const { mixId, storageKey } = newMixKey(input.trackId);
    await storage().put(storageKey, { filePath: spooled }, { contentType: "audio/wav" });
    try {
      return await addMixVersion({
        id: mixId,
        trackId: input.trackId,
        originalName: input.originalName.slice(0, 255) || "mix.wav",
        storageKey,
        sizeBytes,
        format: {
          sampleRateHz: format.sampleRate,
          channels: format.channels,
          bitDepth: format.bitDepth as MixFormat["bitDepth"],
          sampleFormat: format.sampleFormat,
          frames: format.frames,
        },
        uploadedBy: input.uploadedBy ?? null,
      });
    } catch (error) {
      // No row, so no file either.
      await storage().delete(storageKey);
      throw error;
    }
  } finally {
    await rm(folder, { recursive: true, force: true });
  }
}

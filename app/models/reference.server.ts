// Reference tracks of a release: WAVs the studio compares its masters
// against. Staff only: no client page, download or API path ever lists or
// serves one (every route here takes STAFF, and 404s otherwise). Uploaded
// through the same spooling and refusals as mix versions (spoolWav),
// analysed on arrival by the worker (the analyze queue, `{ referenceId }`),
// deleted with their stored file.
import { randomUUID } from "node:crypto";
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import type { Readable } from "node:stream";
import { db } from "../lib/db.server.ts";
import { analysisStateOf } from "./analysis-state.server.ts";
import { storage } from "../lib/storage/storage.server.ts";
import { enqueueAnalyzeReference } from "../jobs/queue.server.ts";
import { spoolWav, uploadMaxBytes, type AnalysisState, type MixFormat } from "./mix.server.ts";

export type ReferenceTrack = MixFormat & {
  id: string;
  releaseId: string;
  originalName: string;
  storageKey: string;
  sizeBytes: number;
  durationSeconds: number;
  analysis: unknown;
  analysisState: AnalysisState;
  analysisError: string | null;
  createdAt: Date;
};

type ReferenceRow = {
  id: string;
  release_id: string;
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
  created_at: Date;
};

const columns = [
  "id", "release_id", "original_name", "storage_key", "size_bytes", "sample_rate_hz", "channels", "bit_depth",
  "sample_format", "frames", "analysis", "analysis_state", "analysis_error", "created_at",
];

function fromRow(row: ReferenceRow): ReferenceTrack {
  const frames = Number(row.frames);
  return {
    id: row.id,
    releaseId: row.release_id,
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
    createdAt: row.created_at,
  };
}

/** A release's references, newest first; analyses without the short-term curve (getReference has it). */
export async function listReferences(releaseId: string): Promise<ReferenceTrack[]> {
  const rows = await db("reference_tracks")
    .where({ release_id: releaseId })
    .orderBy("created_at", "desc")
    .select<ReferenceRow[]>([...columns.filter((c) => c !== "analysis"), db.raw("analysis - 'shortTermLufs' AS analysis")]);
  return rows.map(fromRow);
}

/** One reference of this release (with its whole analysis), or undefined. */
export async function getReference(releaseId: string, id: string): Promise<ReferenceTrack | undefined> {
  const row = await db("reference_tracks").where({ id, release_id: releaseId }).first<ReferenceRow | undefined>(columns);
  return row && fromRow(row);
}

async function getReferenceById(id: string): Promise<ReferenceTrack | undefined> {
  const row = await db("reference_tracks").where({ id }).first<ReferenceRow | undefined>(columns);
  return row && fromRow(row);
}

/**
 * An uploaded file becomes a reference of the release: spooled and checked
 * exactly as a mix is (MixUploadError for a refused file, leaving no row and
 * nothing stored), stored, and its analysis queued.
 */
export async function addUploadedReference(input: {
  releaseId: string;
  originalName: string;
  body: Readable | AsyncIterable<Uint8Array>;
  uploadedBy?: string | null;
  maxBytes?: number;
}): Promise<ReferenceTrack> {
  const maxBytes = input.maxBytes ?? uploadMaxBytes();
  const folder = await mkdtemp(path.join(process.env.UPLOAD_TMP_DIR ?? os.tmpdir(), "tidemark-upload-"));
  const spooled = path.join(folder, "upload.wav");
  try {
    const { sizeBytes, format } = await spoolWav(input.body, spooled, maxBytes);
    const id = randomUUID();
    const storageKey = `references/${input.releaseId}/${id}.wav`;
    await storage().put(storageKey, { filePath: spooled }, { contentType: "audio/wav" });
    let reference: ReferenceTrack;
    try {
      const [row] = await db("reference_tracks")
        .insert({
          id,
          release_id: input.releaseId,
          original_name: input.originalName.slice(0, 255) || "reference.wav",
          storage_key: storageKey,
          size_bytes: sizeBytes,
          sample_rate_hz: format.sampleRate,
          channels: format.channels,
          bit_depth: format.bitDepth,
          sample_format: format.sampleFormat,
          frames: format.frames,
          uploaded_by: input.uploadedBy ?? null,
        })
        .returning<ReferenceRow[]>(columns);
      reference = fromRow(row);
    } catch (error) {
      await storage().delete(storageKey); // no row, so no file either
      throw error;
    }
    try {
      const jobId = await enqueueAnalyzeReference(reference.id, reference.durationSeconds);
      await db("reference_tracks").where({ id }).update({ analysis_job_id: jobId });
    } catch (error) {
      await markReferenceAnalysisFailed(id, `the analysis could not be queued: ${(error as Error).message}`);
      return (await getReferenceById(id))!;
    }
    return reference;
  } finally {
    await rm(folder, { recursive: true, force: true });
  }
}

/** Deletes the reference and its stored file; false when the release has no such reference. */
export async function deleteReference(releaseId: string, id: string): Promise<boolean> {
  const [row] = await db("reference_tracks").where({ id, release_id: releaseId }).delete().returning<{ storage_key: string }[]>(["storage_key"]);
  if (!row) return false;
  await storage().delete(row.storage_key);
  return true;
}

const referenceAnalysis = analysisStateOf("reference_tracks");

/** Claims the analysis for a worker; undefined when there is nothing (left) to do. */
export async function startReferenceAnalysis(id: string, jobId: string): Promise<ReferenceTrack | undefined> {
  const row = await referenceAnalysis.claim<ReferenceRow>(id, jobId, columns);
  return row && fromRow(row);
}

export const saveReferenceAnalysis = referenceAnalysis.save;
export const markReferenceAnalysisFailed = referenceAnalysis.markFailed;
export const markReferenceAnalysisRetrying = referenceAnalysis.markRetrying;

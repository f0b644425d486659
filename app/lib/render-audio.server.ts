// The bytes of a render for listening, by the rule of render-visibility:
// whole for staff, for a preview, and for a paid release; a client listening
// to a print of an unpaid release gets only its first UNPAID_STRETCH_S
// seconds, as a WAV of its own (the stored header with the RIFF and data
// sizes rewritten, then that stretch of the audio), with byte ranges over it
// so the players can seek inside it. Why this form:
// docs/decisions/2026-12-02-unpaid-print-stretch.md.
import { Readable } from "node:stream";
import { parseWavHeaderBytes } from "../../dsp/io/wav-reader.ts";
import { contentDisposition, parseRange, serveStored } from "./http-range.server.ts";
import { notFound } from "./http.server.ts";
import { storage, StorageNotFoundError } from "./storage/storage.server.ts";
import { listeningFormFor, UNPAID_STRETCH_S, type RenderViewer } from "./render-visibility.server.ts";

const HEADER_READ_BYTES = 64 * 1024;

async function readAll(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(chunk as Buffer);
  return Buffer.concat(chunks);
}

/** A render's audio for the players, whole or the unpaid stretch. */
export async function serveRenderAudio(
  request: Request,
  viewer: Pick<RenderViewer, "role">,
  render: { kind: "preview" | "print"; outputKey: string },
  releaseId: string,
  options: { fileName: string },
): Promise<Response> {
  const form = await listeningFormFor(viewer, render, releaseId);
  if (form === "whole") return serveStored(request, render.outputKey, { fileName: options.fileName, contentType: "audio/wav", disposition: "inline" });
  return serveStretch(request, render.outputKey, UNPAID_STRETCH_S, options.fileName);
}

/** The first `seconds` of a stored WAV as a WAV of its own, with byte ranges. */
export async function serveStretch(request: Request, key: string, seconds: number, fileName: string): Promise<Response> {
  let fileSize: number;
  try {
    ({ sizeBytes: fileSize } = await storage().stat(key));
  } catch (error) {
    if (error instanceof StorageNotFoundError) throw notFound();
    throw error;
  }
  const head = await readAll(await storage().get(key, { start: 0, end: Math.min(fileSize, HEADER_READ_BYTES) - 1 }));
  const { format, dataOffset, blockAlign } = await parseWavHeaderBytes(head, fileSize);
  const dataBytes = Math.min(format.frames, Math.round(seconds * format.sampleRate)) * blockAlign;
  const header = Buffer.from(head.subarray(0, dataOffset));
  header.writeUInt32LE(dataOffset + dataBytes - 8, 4);
  header.writeUInt32LE(dataBytes, dataOffset - 4);
  const size = dataOffset + dataBytes;

  const headers = new Headers({
    "Content-Type": "audio/wav",
    "Content-Disposition": contentDisposition(fileName, "inline"),
    "Accept-Ranges": "bytes",
    "Cache-Control": "private, no-store",
    "X-Tidemark-Stretch-Seconds": String(seconds),
  });
  const span = parseRange(request.headers.get("Range"), size);
  if (span === "unsatisfiable") {
    headers.set("Content-Range", `bytes */${size}`);
    return new Response(null, { status: 416, headers });
  }
  const { start, end } = span ?? { start: 0, end: size - 1 };
  headers.set("Content-Length", String(end - start + 1));
  if (span) headers.set("Content-Range", `bytes ${start}-${end}/${size}`);
  if (request.method === "HEAD") return new Response(null, { status: span ? 206 : 200, headers });
  async function* bytes() {
    if (start < dataOffset) yield header.subarray(start, Math.min(end + 1, dataOffset));
    if (end >= dataOffset) yield* await storage().get(key, { start: Math.max(start, dataOffset), end });
  }
  return new Response(Readable.toWeb(Readable.from(bytes())) as ReadableStream<Uint8Array>, { status: span ? 206 : 200, headers });
}

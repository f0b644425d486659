// Stored files as HTTP downloads with byte ranges (RFC 9110 §14), so an
// <audio> element can seek and a broken download can resume; the file name
// as RFC 6266 asks (an ASCII fallback plus filename*= in UTF-8).
import { Readable } from "node:stream";
import { storage, StorageNotFoundError } from "./storage/storage.server.ts";
import { notFound } from "./http.server.ts";

export type ByteSpan = { start: number; end: number };

/**
 * The span a `Range` header asks for in a file of `sizeBytes`: null when the
 * header is absent or not a single bytes range we serve (answer the whole
 * file, as RFC 9110 allows), "unsatisfiable" when no byte of it exists.
 */
export function parseRange(header: string | null, sizeBytes: number): ByteSpan | "unsatisfiable" | null {
  if (!header) return null;
  const match = /^bytes=\s*(\d*)\s*-\s*(\d*)\s*$/.exec(header.trim());
  // Several ranges (multipart/byteranges) are not served; the whole file is.
  if (!match) return null;
  const [, first, last] = match;
  if (first === "" && last === "") return null;
  if (first === "") {
    // A suffix: the last N bytes.
    const length = Number(last);
    if (length === 0 || sizeBytes === 0) return "unsatisfiable";
    return { start: Math.max(0, sizeBytes - length), end: sizeBytes - 1 };
  }
  const start = Number(first);
  if (start >= sizeBytes) return "unsatisfiable";
  const end = last === "" ? sizeBytes - 1 : Math.min(Number(last), sizeBytes - 1);
  if (end < start) return null;
  return { start, end };
}

/** `attachment; filename="…"; filename*=UTF-8''…` with a plain-ASCII fallback. */
export function contentDisposition(fileName: string, disposition: "attachment" | "inline" = "attachment"): string {
  const ascii = fileName.normalize("NFKD").replace(/[^\x20-\x7e]/g, "").replace(/["\\]/g, "_").trim() || "download.wav";
  const encoded = encodeURIComponent(fileName).replace(/['()*]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`);
  return `${disposition}; filename="${ascii}"; filename*=UTF-8''${encoded}`;
}

/** A file name from parts such as release, track and version: letters kept, separators tidied. */
export function downloadName(parts: string[], extension: string): string {
  const stem = parts
    .map((part) => part.replace(/[\\/:*?"<>|\u0000-\u001f]+/g, " ").replace(/\s+/g, " ").trim())
    .filter(Boolean)
    .join(" - ");
  return `${stem.slice(0, 200) || "download"}.${extension}`;
}

/** A stored object as a response: whole (200), a range (206) or 416; HEAD answers the headers only. */
export async function serveStored(
  request: Request,
  key: string,
  options: { fileName: string; contentType: string; disposition?: "attachment" | "inline" },
): Promise<Response> {
  let sizeBytes: number;
  try {
    ({ sizeBytes } = await storage().stat(key));
  } catch (error) {
    if (error instanceof StorageNotFoundError) throw notFound();
    throw error;
  }
  const headers = new Headers({
    "Content-Type": options.contentType,
    "Content-Disposition": contentDisposition(options.fileName, options.disposition),
    "Accept-Ranges": "bytes",
    // The file under a key never changes (new versions get new keys), but access can.
    "Cache-Control": "private, max-age=3600",
  });
  const span = parseRange(request.headers.get("Range"), sizeBytes);
  if (span === "unsatisfiable") {
    headers.set("Content-Range", `bytes */${sizeBytes}`);
    headers.delete("Content-Disposition");
    return new Response(null, { status: 416, headers });
  }
  const head = request.method === "HEAD";
  if (span) {
    headers.set("Content-Range", `bytes ${span.start}-${span.end}/${sizeBytes}`);
    headers.set("Content-Length", String(span.end - span.start + 1));
    const body = head ? null : (Readable.toWeb(await storage().get(key, span)) as ReadableStream<Uint8Array>);
    return new Response(body, { status: 206, headers });
  }
  headers.set("Content-Length", String(sizeBytes));
  const body = head || sizeBytes === 0 ? null : (Readable.toWeb(await storage().get(key)) as ReadableStream<Uint8Array>);
  return new Response(body, { status: 200, headers });
}

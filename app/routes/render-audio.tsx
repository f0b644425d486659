// The audio of a finished render, for the A/B player: staff hear every render
// of their studio, a client only those sent to them for review. Answers byte
// ranges, so the browser may fetch a long print in parts.
import { Readable } from "node:stream";
import type { Route } from "./+types/render-audio";
import { requireUser } from "../lib/auth.server.ts";
import { notFound } from "../lib/http.server.ts";
import { storage, StorageNotFoundError } from "../lib/storage/storage.server.ts";
import { getRenderForViewer } from "../models/review.server.ts";

const RANGE = /^bytes=(\d*)-(\d*)$/;

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const render = await getRenderForViewer(user, params.renderId);
  if (!render) throw notFound();
  const store = storage();
  let sizeBytes: number;
  try {
    sizeBytes = (await store.stat(render.outputKey)).sizeBytes;
  } catch (error) {
    if (error instanceof StorageNotFoundError) throw notFound();
    throw error;
  }
  const headers = new Headers({
    "Content-Type": "audio/wav",
    "Accept-Ranges": "bytes",
    "Cache-Control": "private, max-age=3600",
    "Content-Disposition": `inline; filename="render-${render.id}.wav"`,
  });
  const match = RANGE.exec(request.headers.get("Range") ?? "");
  if (match && (match[1] || match[2])) {
    // "bytes=-N" is the last N bytes.
    const start = match[1] ? Number(match[1]) : Math.max(0, sizeBytes - Number(match[2]));
    const end = match[1] && match[2] ? Math.min(Number(match[2]), sizeBytes - 1) : sizeBytes - 1;
    if (start > end || start >= sizeBytes) {
      return new Response(null, { status: 416, headers: { "Content-Range": `bytes */${sizeBytes}` } });
    }
    headers.set("Content-Range", `bytes ${start}-${end}/${sizeBytes}`);
    headers.set("Content-Length", String(end - start + 1));
    const body = Readable.toWeb(await store.get(render.outputKey, { start, end })) as ReadableStream<Uint8Array>;
    return new Response(body, { status: 206, headers });
  }
  headers.set("Content-Length", String(sizeBytes));
  const body = Readable.toWeb(await store.get(render.outputKey)) as ReadableStream<Uint8Array>;
  return new Response(body, { status: 200, headers });
}

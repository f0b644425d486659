// Receiving a mix upload over HTTP: the body goes, as a stream, to
// addUploadedMix (app/models/mix.server.ts), which spools it to a temporary
// file with the size limit, checks it with probeWav, stores it and adds the
// version. Here: the limit from the environment, a refusal before reading
// when the declared length is already too large, and refusals as messages
// for the person uploading with their HTTP status (413 too large, 422 not usable).
import { Readable } from "node:stream";
import { addUploadedMix, MixUploadError, uploadMaxBytes, type Mix } from "../models/mix.server.ts";
import { addUploadedReference, type ReferenceTrack } from "../models/reference.server.ts";

export { uploadMaxBytes };

/** An upload refused; the message is meant for the person uploading. */
export class UploadError extends Error {
  constructor(
    message: string,
    readonly status: 413 | 422,
  ) {
    super(message);
    this.name = "UploadError";
  }
}

export function formatBytes(bytes: number): string {
  if (bytes >= 1e9) return `${Number((bytes / 1e9).toFixed(1))} GB`;
  if (bytes >= 1e6) return `${Number((bytes / 1e6).toFixed(1))} MB`;
  if (bytes >= 1e3) return `${Number((bytes / 1e3).toFixed(0))} kB`;
  return `${bytes} bytes`;
}

export const tooLargeMessage = (maxBytes: number) => `The file is larger than the upload limit of ${formatBytes(maxBytes)}.`;

/** The reader's own, specific reason, as a sentence. */
export const refusedMessage = (reason: string) => `The file was refused: ${reason}.`;

/** A name safe to keep and show: no folders, no control characters, at most 255 characters. */
export function cleanFileName(name: string | null | undefined): string {
  // biome-ignore lint/suspicious/noControlCharactersInRegex: control characters are what is removed
  const base = (name ?? "").split(/[\\/]/).pop()!.replace(/[\u0000-\u001f\u007f]/g, "").trim();
  return (base || "mix.wav").slice(0, 255);
}

export type UploadInput = {
  trackId: string;
  userId: string;
  fileName: string | null | undefined;
  body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array> | null;
  /** When the client says how long the body is, a file past the limit is refused before reading it. */
  declaredBytes?: number | null;
};

/** Streams one file into the track's next version, or throws an UploadError. */
export async function receiveMixUpload(input: UploadInput): Promise<Mix> {
  const maxBytes = uploadMaxBytes();
  if (input.declaredBytes != null && input.declaredBytes > maxBytes) throw new UploadError(tooLargeMessage(maxBytes), 413);
  if (!input.body) throw new UploadError("No file was sent.", 422);
  const body = input.body instanceof ReadableStream ? Readable.fromWeb(input.body as never) : input.body;
  try {
    return await addUploadedMix({ trackId: input.trackId, originalName: cleanFileName(input.fileName), body, uploadedBy: input.userId, maxBytes });
  } catch (error) {
    throw toUploadError(error, maxBytes);
  }
}

/** A refusal of the file's content as the message for the person uploading; anything else unchanged. */
function toUploadError(error: unknown, maxBytes: number): unknown {
  if (!(error instanceof MixUploadError)) return error;
  if (error.code === "too-large") return new UploadError(tooLargeMessage(maxBytes), 413);
  if (error.code === "empty") return new UploadError("The file is empty.", 422);
  return new UploadError(refusedMessage(error.message), 422);
}

/** Streams one file into a new reference track of the release, refused exactly as a mix would be. */
export async function receiveReferenceUpload(input: Omit<UploadInput, "trackId"> & { releaseId: string }): Promise<ReferenceTrack> {
  const maxBytes = uploadMaxBytes();
  if (input.declaredBytes != null && input.declaredBytes > maxBytes) throw new UploadError(tooLargeMessage(maxBytes), 413);
  if (!input.body) throw new UploadError("No file was sent.", 422);
  const body = input.body instanceof ReadableStream ? Readable.fromWeb(input.body as never) : input.body;
  try {
    const originalName = cleanFileName(input.fileName);
    return await addUploadedReference({ releaseId: input.releaseId, originalName, body, uploadedBy: input.userId, maxBytes });
  } catch (error) {
    throw toUploadError(error, maxBytes);
  }
}

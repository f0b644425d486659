// The release package: one zip with a folder per delivery format holding
// "NN Title.wav" files, and loudness-report.csv at the top. Streamed: each
// file is opened from storage only when the zip writer reaches it and flows
// through (stored, not deflated: PCM audio barely compresses and deflate
// would only cost CPU), so memory stays flat whatever the release's size.
// yazl switches to ZIP64 by itself past 4 GiB.
import { PassThrough, type Readable } from "node:stream";
import yazl from "yazl";
import type { StorageDriver } from "../storage/storage.server.ts";

export interface PackageFile {
  /** Path inside the zip, e.g. "Streaming master 24-bit 48 kHz/01 Low Tide.wav". */
  path: string;
  storageKey: string;
  /** When known, the zip refuses a stream of another length. */
  sizeBytes?: number;
}

export interface PackageInput {
  files: readonly PackageFile[];
  reportCsv: string;
  /** Timestamp of the entries (default now). */
  mtime?: Date;
}

export const REPORT_FILE_NAME = "loudness-report.csv";

export function streamReleasePackage(input: PackageInput, store: StorageDriver): Readable {
  const paths = new Set<string>();
  for (const f of input.files) {
    if (paths.has(f.path.toLowerCase()) || f.path.toLowerCase() === REPORT_FILE_NAME) throw new Error(`two files in the package would be named "${f.path}"`);
    paths.add(f.path.toLowerCase());
  }
  const zip = new yazl.ZipFile();
  const out = new PassThrough();
  const fail = (error: Error) => out.destroy(error);
  zip.on("error", fail);
  const mtime = input.mtime ?? new Date();
  zip.addBuffer(Buffer.from(input.reportCsv, "utf8"), REPORT_FILE_NAME, { mtime, compress: true });
  for (const file of input.files) {
    const options = { mtime, compress: false, ...(file.sizeBytes !== undefined ? { size: file.sizeBytes } : {}) };
    zip.addReadStreamLazy(file.path, options, (cb) => {
      store.get(file.storageKey).then(
        (stream) => {
          // A storage stream that breaks mid-file must end the download with an error, not a short zip.
          stream.once("error", fail);
          cb(null, stream);
        },
        (error: Error) => cb(error, undefined as never),
      );
    });
  }
  zip.end();
  zip.outputStream.pipe(out);
  // A client that goes away stops the reading of storage too.
  out.once("close", () => (zip.outputStream as Readable).destroy?.());
  return out;
}

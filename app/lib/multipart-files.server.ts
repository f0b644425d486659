// Streams the files of a multipart form body one at a time, so the web
// process never holds a whole upload in memory (busboy parses as the bytes
// arrive; each file's stream is consumed before the next part is read).
import { Readable } from "node:stream";
import busboy from "busboy";

export class MultipartError extends Error {}

export function parseMultipartFiles(request: Request, options: { maxFiles: number }, onFile: (fileName: string, stream: Readable) => Promise<void>): Promise<void> {
  const contentType = request.headers.get("Content-Type") ?? "";
  if (!request.body || !contentType.toLowerCase().startsWith("multipart/form-data")) {
    return Promise.reject(new MultipartError("Send the files as multipart/form-data."));
  }
  return new Promise((resolve, reject) => {
    const source = Readable.fromWeb(request.body as never);
    let parser: busboy.Busboy;
    try {
      parser = busboy({ headers: { "content-type": contentType }, limits: { files: options.maxFiles } });
    } catch (error) {
      reject(new MultipartError((error as Error).message));
      return;
    }
    let settled = false;
    const finish = (error?: unknown) => {
      if (settled) return;
      settled = true;
      if (error) {
        source.unpipe(parser);
        source.destroy();
        reject(error);
      } else resolve();
    };
    // Files are handled in order; a failure stops reading the rest of the body.
    let queue = Promise.resolve();
    parser.on("file", (_field, stream, info) => {
      if (!info.filename) {
        stream.resume();
        return;
      }
      queue = queue.then(() => (settled ? void stream.resume() : onFile(info.filename, stream)));
      queue.catch(finish);
    });
    parser.on("filesLimit", () => finish(new MultipartError(`At most ${options.maxFiles} files at once.`)));
    parser.on("close", () => queue.then(() => finish(), finish));
    parser.on("error", (error) => finish(new MultipartError((error as Error).message)));
    source.on("error", finish);
    source.pipe(parser);
  });
}

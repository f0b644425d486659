// Storage on the local disk under one folder. A write goes to a temporary
// name beside its final name and is renamed when complete, so a reader never
// sees half a file (rename within a folder is atomic on POSIX file systems).
import { createReadStream, createWriteStream } from "node:fs";
import { mkdir, rename, rm, stat } from "node:fs/promises";
import { randomBytes } from "node:crypto";
import path from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import { assertKey, existsBy, StorageNotFoundError, type ByteRange, type PutOptions, type PutSource, type StorageDriver, type StoredObject } from "./driver.server.ts";

export function createLocalDriver(rootDir: string): StorageDriver {
  const root = path.resolve(rootDir);

  const pathOf = (key: string) => {
    assertKey(key);
    return path.join(root, ...key.split("/"));
  };

  const statOf = async (key: string): Promise<StoredObject> => {
    try {
      const info = await stat(pathOf(key));
      if (!info.isFile()) throw new StorageNotFoundError(key);
      return { sizeBytes: info.size };
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code === "ENOENT") throw new StorageNotFoundError(key);
      throw error;
    }
  };

  return {
    kind: "local",

    async put(key: string, source: PutSource, _options?: PutOptions) {
      const finalPath = pathOf(key);
      await mkdir(path.dirname(finalPath), { recursive: true });
      // Dot-prefixed and ending in .part: never a valid key, so never listed as one.
      const tempPath = path.join(path.dirname(finalPath), `.${path.basename(finalPath)}.${randomBytes(6).toString("hex")}.part`);
      const input =
        source instanceof Uint8Array ? Readable.from([source]) : "filePath" in source ? createReadStream(source.filePath) : source;
      try {
        await pipeline(input, createWriteStream(tempPath, { flags: "wx" }));
        await rename(tempPath, finalPath);
      } catch (error) {
        await rm(tempPath, { force: true });
        throw error;
      }
      return statOf(key);
    },

    async get(key: string, range?: ByteRange) {
      await statOf(key);
      return createReadStream(pathOf(key), { start: range?.start, end: range?.end });
    },

    stat: statOf,

    exists: existsBy(statOf),

    async delete(key: string) {
      await rm(pathOf(key), { force: true });
    },

    async localFile(key: string, _tmpDir?: string) {
      await statOf(key);
      // The stored file itself; nothing to clean up.
      return { path: pathOf(key), release: async () => {} };
    },
  };
}

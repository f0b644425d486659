// The storage interface shared by the drivers, its error, and the rule for keys.
import type { Readable } from "node:stream";

export type PutSource = Readable | Uint8Array | { filePath: string };

export type PutOptions = { contentType?: string };

/** Byte range, both ends inclusive as in HTTP `Range: bytes=start-end`. */
export type ByteRange = { start?: number; end?: number };

export type StoredObject = { sizeBytes: number; contentType?: string };

/** A readable file on this machine; `release` removes it when it was a temporary copy. */
export type LocalFile = { path: string; release(): Promise<void> };

export interface StorageDriver {
  readonly kind: "local" | "s3";
  put(key: string, source: PutSource, options?: PutOptions): Promise<StoredObject>;
  get(key: string, range?: ByteRange): Promise<Readable>;
  /** Throws StorageNotFoundError when the key holds nothing. */
  stat(key: string): Promise<StoredObject>;
  exists(key: string): Promise<boolean>;
  /** Deleting a missing key is not an error. */
  delete(key: string): Promise<void>;
  /** A local file with the object's bytes, for a worker that reads by path; a copy goes under `tmpDir` (default the system's). */
  localFile(key: string, tmpDir?: string): Promise<LocalFile>;
}

export class StorageNotFoundError extends Error {
  constructor(readonly key: string) {
    super(`nothing is stored under "${key}"`);
    this.name = "StorageNotFoundError";
  }
}

const KEY_SEGMENT = /^[A-Za-z0-9][A-Za-z0-9._-]*$/;

/** Refuses keys that could leave the storage root or differ only by spelling. */
export function assertKey(key: string): void {
  const segments = key.split("/");
  if (key.length === 0 || key.length > 512 || !segments.every((s) => KEY_SEGMENT.test(s) && s !== "." && s !== "..")) {
    throw new Error(`storage key "${key}" is not valid: use slash-separated names of letters, digits, ".", "_" and "-"`);
  }
}

/** `exists` for a driver, from its `stat`: a missing key is false, other errors are thrown. */
export function existsBy(stat: (key: string) => Promise<StoredObject>): (key: string) => Promise<boolean> {
  return async (key) => {
    try {
      await stat(key);
      return true;
    } catch (error) {
      if (error instanceof StorageNotFoundError) return false;
      throw error;
    }
  };
}

// Both storage drivers through the same checks: the local disk in a
// temporary folder, and S3 against the fake S3 server that `npm test`
// starts (S3_ENDPOINT). Writes must be atomic: a source that fails part-way
// leaves nothing under the key (and, locally, no temporary file).
import { mkdtemp, readdir, readFile, rm } from "node:fs/promises";
import { randomUUID } from "node:crypto";
import os from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { assertKey, createStorage, StorageNotFoundError, type StorageDriver } from "../../app/lib/storage/storage.server.ts";
import { PART_BYTES } from "../../app/lib/storage/s3-driver.server.ts";
import { createRng } from "../../dsp/testing/signals.ts";

async function readAll(stream: Readable): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(Buffer.from(chunk));
  return Buffer.concat(chunks);
}

/** Deterministic bytes, so a mixed-up part or offset shows as a mismatch. */
function patternBytes(length: number, seed: number): Buffer {
  const bytes = Buffer.alloc(length);
  const rng = createRng(seed);
  for (let i = 0; i < length; i++) bytes[i] = Math.floor(rng() * 256);
  return bytes;
}

/** Gives `good` in small pieces, then fails, as an interrupted upload does. */
function failingStream(good: Buffer, pieceBytes: number): Readable {
  let offset = 0;
  return new Readable({
    read() {
      if (offset >= good.length) {
        this.destroy(new Error("connection reset by the test"));
        return;
      }
      this.push(good.subarray(offset, offset + pieceBytes));
      offset += pieceBytes;
    },
  });
}

const s3Env = process.env.S3_ENDPOINT && process.env.S3_BUCKET ? process.env : undefined;

type Case = { name: string; make: () => Promise<{ driver: StorageDriver; cleanup: () => Promise<void>; root?: string }> };
const cases: Case[] = [
  {
    name: "local",
    make: async () => {
      const root = await mkdtemp(path.join(os.tmpdir(), "tidemark-storage-test-"));
      return { driver: createStorage({ STORAGE_DRIVER: "local", STORAGE_DIR: root }), root, cleanup: () => rm(root, { recursive: true, force: true }) };
    },
  },
  {
    name: "s3",
    make: async () => ({ driver: createStorage({ ...s3Env, STORAGE_DRIVER: "s3" }), cleanup: async () => {} }),
  },
];

for (const testCase of cases) {
  describe.skipIf(testCase.name === "s3" && !s3Env)(`storage driver: ${testCase.name}`, () => {
    let driver: StorageDriver;
    let cleanup: () => Promise<void>;
    let root: string | undefined;
    // Each run writes under its own prefix, so runs and other tests never collide.
    const prefix = `test-storage/${randomUUID()}`;
    const written: string[] = [];
    const keyOf = (name: string) => {
      const key = `${prefix}/${name}`;
      written.push(key);
      return key;
    };

    beforeAll(async () => {
      ({ driver, cleanup, root } = await testCase.make());
      expect(driver.kind).toBe(testCase.name);
    });
    afterAll(async () => {
      for (const key of written) await driver.delete(key);
      await cleanup();
    });

    it("stores bytes and gives them back whole, by range, by stat and as a local file", async () => {
      const key = keyOf("small.bin");
      const bytes = patternBytes(10_000, 1);
      const stored = await driver.put(key, bytes, { contentType: "application/octet-stream" });
      expect(stored.sizeBytes).toBe(10_000);
      expect((await driver.stat(key)).sizeBytes).toBe(10_000);
      expect(await driver.exists(key)).toBe(true);
      expect((await readAll(await driver.get(key))).equals(bytes)).toBe(true);
      // HTTP ranges include both ends.
      expect((await readAll(await driver.get(key, { start: 100, end: 199 }))).equals(bytes.subarray(100, 200))).toBe(true);
      expect((await readAll(await driver.get(key, { start: 9_990 }))).equals(bytes.subarray(9_990))).toBe(true);
      const local = await driver.localFile(key);
      expect((await readFile(local.path)).equals(bytes)).toBe(true);
      await local.release();
    });

    it("stores a stream and a file path, and a second put replaces the first", async () => {
      const key = keyOf("stream.bin");
      const bytes = patternBytes(200_000, 2);
      await driver.put(key, Readable.from([bytes.subarray(0, 70_000), bytes.subarray(70_000)]));
      expect((await readAll(await driver.get(key))).equals(bytes)).toBe(true);

      const folder = await mkdtemp(path.join(os.tmpdir(), "tidemark-storage-src-"));
      const filePath = path.join(folder, "source.bin");
      const other = patternBytes(5_000, 3);
      await import("node:fs/promises").then((fs) => fs.writeFile(filePath, other));
      await driver.put(key, { filePath });
      expect((await readAll(await driver.get(key))).equals(other)).toBe(true);
      await rm(folder, { recursive: true, force: true });
    });

    it("uploads more than two parts' worth in order", async () => {
      const key = keyOf("large.bin");
      const bytes = patternBytes(2 * PART_BYTES + 12_345, 4);
      // Odd piece sizes so part boundaries fall inside pieces.
      const pieces: Buffer[] = [];
      for (let offset = 0; offset < bytes.length; offset += 1_000_003) pieces.push(bytes.subarray(offset, offset + 1_000_003));
      expect((await driver.put(key, Readable.from(pieces))).sizeBytes).toBe(bytes.length);
      expect((await readAll(await driver.get(key))).equals(bytes)).toBe(true);
      const tail = await readAll(await driver.get(key, { start: PART_BYTES - 10, end: PART_BYTES + 9 }));
      expect(tail.equals(bytes.subarray(PART_BYTES - 10, PART_BYTES + 10))).toBe(true);
    });

    it("leaves nothing under the key when the source fails part-way", async () => {
      const small = keyOf("broken-small.bin");
      await expect(driver.put(small, failingStream(patternBytes(50_000, 5), 10_000))).rejects.toThrow(/connection reset/);
      expect(await driver.exists(small)).toBe(false);

      // Past one part, so the S3 driver is inside a multipart upload when it fails.
      const large = keyOf("broken-large.bin");
      await expect(driver.put(large, failingStream(patternBytes(PART_BYTES + 100_000, 6), 1_000_000))).rejects.toThrow(/connection reset/);
      expect(await driver.exists(large)).toBe(false);

      if (root) {
        const folder = path.join(root, ...prefix.split("/"));
        const leftovers = (await readdir(folder)).filter((name) => name.endsWith(".part"));
        expect(leftovers).toEqual([]);
      }
    });

    it("keeps the previous object when a replacement fails", async () => {
      const key = keyOf("kept.bin");
      const bytes = patternBytes(3_000, 7);
      await driver.put(key, bytes);
      await expect(driver.put(key, failingStream(patternBytes(40_000, 8), 10_000))).rejects.toThrow();
      expect((await readAll(await driver.get(key))).equals(bytes)).toBe(true);
    });

    it("reports a missing key and deletes idempotently", async () => {
      const key = keyOf("gone.bin");
      await driver.put(key, patternBytes(10, 9));
      await driver.delete(key);
      await driver.delete(key);
      expect(await driver.exists(key)).toBe(false);
      await expect(driver.stat(key)).rejects.toBeInstanceOf(StorageNotFoundError);
      await expect(driver.get(key)).rejects.toBeInstanceOf(StorageNotFoundError);
      await expect(driver.localFile(key)).rejects.toBeInstanceOf(StorageNotFoundError);
    });
  });
}

describe("storage keys", () => {
  it("accepts slash-separated names and refuses ways out of the root", () => {
    expect(() => assertKey("mixes/0d6f/3.wav")).not.toThrow();
    for (const bad of ["", "/abs", "a/../b", "a//b", "a/./b", "..", "a\\b", ".hidden", "a/b/", "ä.wav"]) {
      expect(() => assertKey(bad), bad).toThrow(/not valid/);
    }
  });

  it("chooses the driver from STORAGE_DRIVER alone", () => {
    expect(createStorage({ STORAGE_DIR: "/tmp/x", S3_ENDPOINT: "http://127.0.0.1:1", S3_BUCKET: "b" }).kind).toBe("local");
    expect(createStorage({ STORAGE_DRIVER: "s3", S3_ENDPOINT: "http://127.0.0.1:1", S3_BUCKET: "b" }).kind).toBe("s3");
    expect(() => createStorage({ STORAGE_DRIVER: "s3" })).toThrow(/S3_BUCKET/);
    expect(() => createStorage({ STORAGE_DRIVER: "disk" })).toThrow(/STORAGE_DRIVER/);
  });
});

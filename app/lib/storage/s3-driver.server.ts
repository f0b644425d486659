// Storage in an S3-compatible bucket through @aws-sdk/client-s3. Objects
// smaller than one part go up in one PutObject; larger ones as a multipart
// upload that is aborted on any error, so an object appears under its key
// only when complete. At most one part (PART_BYTES) is held in memory.
import { createReadStream, createWriteStream } from "node:fs";
import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  PutObjectCommand,
  S3Client,
  UploadPartCommand,
} from "@aws-sdk/client-s3";
import { assertKey, existsBy, StorageNotFoundError, type ByteRange, type PutOptions, type PutSource, type StorageDriver, type StoredObject } from "./driver.server.ts";

/** 8 MiB: above S3's 5 MiB minimum part, and 10 000 parts reach 80 GB. */
export const PART_BYTES = 8 * 1024 * 1024;

export type S3Settings = {
  endpoint?: string;
  bucket: string;
  region: string;
  forcePathStyle: boolean;
  credentials?: { accessKeyId: string; secretAccessKey: string };
};

function isNotFound(error: unknown): boolean {
  const e = error as { name?: string; $metadata?: { httpStatusCode?: number } };
  return e?.name === "NotFound" || e?.name === "NoSuchKey" || e?.$metadata?.httpStatusCode === 404;
}

/** Cuts a byte stream into chunks of exactly `size` bytes (the last may be shorter). */
async function* chunksOf(input: AsyncIterable<Uint8Array>, size: number): AsyncGenerator<Buffer> {
  let parts: Buffer[] = [];
  let filled = 0;
  for await (const piece of input) {
    let buffer = Buffer.from(piece.buffer, piece.byteOffset, piece.byteLength);
    while (filled + buffer.length >= size) {
      const take = size - filled;
      parts.push(buffer.subarray(0, take));
      yield Buffer.concat(parts, size);
      parts = [];
      filled = 0;
      buffer = buffer.subarray(take);
    }
    if (buffer.length > 0) {
      // Copied: the stream may reuse its buffers.
      parts.push(Buffer.from(buffer));
      filled += buffer.length;
    }
  }
  if (filled > 0) yield Buffer.concat(parts, filled);
}

export function createS3Driver(settings: S3Settings): StorageDriver {
  const client = new S3Client({
    endpoint: settings.endpoint,
    region: settings.region,
    forcePathStyle: settings.forcePathStyle,
    credentials: settings.credentials,
    // Checksums only where the API requires them: S3-compatible servers do not
    // all understand the SDK's default streaming checksums.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
  });
  const Bucket = settings.bucket;

  const statOf = async (key: string): Promise<StoredObject> => {
    assertKey(key);
    try {
      const head = await client.send(new HeadObjectCommand({ Bucket, Key: key }));
      return { sizeBytes: Number(head.ContentLength ?? 0), contentType: head.ContentType };
    } catch (error) {
      if (isNotFound(error)) throw new StorageNotFoundError(key);
      throw error;
    }
  };

  const upload = async (key: string, input: AsyncIterable<Uint8Array>, contentType?: string) => {
    const chunks = chunksOf(input, PART_BYTES);
    const first = await chunks.next();
    const firstPart = first.done ? Buffer.alloc(0) : first.value;
    const second = first.done ? { done: true as const, value: undefined } : await chunks.next();
    if (second.done) {
      await client.send(new PutObjectCommand({ Bucket, Key: key, Body: firstPart, ContentLength: firstPart.length, ContentType: contentType }));
      return;
    }
    const { UploadId } = await client.send(new CreateMultipartUploadCommand({ Bucket, Key: key, ContentType: contentType }));
    const done: { ETag?: string; PartNumber: number }[] = [];
    try {
      const sendPart = async (body: Buffer) => {
        const PartNumber = done.length + 1;
        const part = await client.send(new UploadPartCommand({ Bucket, Key: key, UploadId, PartNumber, Body: body, ContentLength: body.length }));
        done.push({ ETag: part.ETag, PartNumber });
      };
      await sendPart(firstPart);
      await sendPart(second.value);
      for await (const body of chunks) await sendPart(body);
      await client.send(new CompleteMultipartUploadCommand({ Bucket, Key: key, UploadId, MultipartUpload: { Parts: done } }));
    } catch (error) {
      await client.send(new AbortMultipartUploadCommand({ Bucket, Key: key, UploadId })).catch(() => {});
      throw error;
    }
  };

  const get = async (key: string, range?: ByteRange): Promise<Readable> => {
    assertKey(key);
    const Range =
      range && (range.start !== undefined || range.end !== undefined) ? `bytes=${range.start ?? 0}-${range.end ?? ""}` : undefined;
    try {
      const object = await client.send(new GetObjectCommand({ Bucket, Key: key, Range }));
      return object.Body as Readable;
    } catch (error) {
      if (isNotFound(error)) throw new StorageNotFoundError(key);
      throw error;
    }
  };

  return {
    kind: "s3",

    async put(key: string, source: PutSource, options?: PutOptions) {
      assertKey(key);
      const input = source instanceof Uint8Array ? Readable.from([source]) : "filePath" in source ? createReadStream(source.filePath) : source;
      await upload(key, input, options?.contentType);
      return statOf(key);
    },

    get,

    stat: statOf,

    exists: existsBy(statOf),

    async delete(key: string) {
      assertKey(key);
      await client.send(new DeleteObjectCommand({ Bucket, Key: key }));
    },

    async localFile(key: string, tmpDir?: string) {
      const body = await get(key);
      const folder = await mkdtemp(path.join(tmpDir ?? os.tmpdir(), "download-"));
      const filePath = path.join(folder, path.basename(key));
      const release = () => rm(folder, { recursive: true, force: true });
      try {
        await pipeline(body, createWriteStream(filePath));
      } catch (error) {
        await release();
        throw error;
      }
      return { path: filePath, release };
    },
  };
}

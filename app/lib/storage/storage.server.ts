// Where the files of mixes and prints live. One interface, two drivers:
// the local disk (the default) and S3 through @aws-sdk/client-s3.
//
// The driver is chosen by STORAGE_DRIVER alone ("local" or "s3"; default
// "local"). S3_ENDPOINT being set does not switch to S3 by itself, because the
// start and test commands always start the fake S3 server and set it.
//
// Keys are relative, slash-separated paths such as "mixes/<track>/<mix>.wav".
// Every write is atomic: a reader sees the whole file under its key or no
// file at all (local: temporary name in the same folder, then rename; S3: the
// object appears when the upload completes).
import { z } from "zod";
import type { StorageDriver } from "./driver.server.ts";
import { createLocalDriver } from "./local-driver.server.ts";
import { createS3Driver } from "./s3-driver.server.ts";

export { assertKey, StorageNotFoundError } from "./driver.server.ts";
export type { ByteRange, LocalFile, PutOptions, PutSource, StorageDriver, StoredObject } from "./driver.server.ts";

const envSchema = z.object({
  STORAGE_DRIVER: z.enum(["local", "s3"]).default("local"),
  STORAGE_DIR: z.string().min(1).default(".data/storage"),
  S3_ENDPOINT: z.string().url().optional(),
  S3_BUCKET: z.string().min(1).optional(),
  S3_REGION: z.string().min(1).default("us-east-1"),
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  // Path-style addressing is what local S3-compatible servers expect.
  S3_FORCE_PATH_STYLE: z.enum(["0", "1"]).default("1"),
});

/** Builds the driver the environment asks for. Exported for tests. */
export function createStorage(source: Record<string, string | undefined> = process.env): StorageDriver {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    throw new Error(`storage settings are not valid: ${parsed.error.issues.map((i) => `${i.path.join(".")}: ${i.message}`).join("; ")}`);
  }
  const env = parsed.data;
  if (env.STORAGE_DRIVER === "local") return createLocalDriver(env.STORAGE_DIR);
  if (!env.S3_BUCKET) throw new Error("STORAGE_DRIVER=s3 needs S3_BUCKET");
  return createS3Driver({
    endpoint: env.S3_ENDPOINT,
    bucket: env.S3_BUCKET,
    region: env.S3_REGION,
    forcePathStyle: env.S3_FORCE_PATH_STYLE === "1",
    credentials:
      env.S3_ACCESS_KEY_ID && env.S3_SECRET_ACCESS_KEY
        ? { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY }
        : undefined,
  });
}

let shared: StorageDriver | undefined;

/** The process's storage, built from the environment on first use. */
export function storage(): StorageDriver {
  shared ??= createStorage();
  return shared;
}

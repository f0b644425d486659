// Local fake of the S3 API for development and tests, on loopback only.
// Started by scripts/fakes.mjs with FAKE_PORT and FAKE_MODE (dev | test);
// files live in the git-ignored .data/fake-s3-<mode>/, the bucket in
// S3_BUCKET is created at start. Prints a line with "ready" once listening.
import { mkdirSync } from "node:fs";
import path from "node:path";
import S3rver from "s3rver";

const port = Number(process.env.FAKE_PORT ?? 4569);
const mode = process.env.FAKE_MODE ?? "dev";
const bucket = process.env.S3_BUCKET ?? `tidemark-${mode}`;
const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), "..", "..");
const directory = path.join(root, ".data", `fake-s3-${mode}`);
mkdirSync(directory, { recursive: true });

const server = new S3rver({
  address: "127.0.0.1",
  port,
  silent: true,
  directory,
  // An existing bucket folder is kept (s3rver only creates the missing one).
  configureBuckets: [{ name: bucket, configs: [] }],
});

await server.run();
console.log(`[fake-s3] ready on 127.0.0.1:${port}, bucket ${bucket}, files in ${path.relative(root, directory)}`);

const stop = () => {
  server.close().finally(() => process.exit(0));
};
process.on("SIGTERM", stop);
process.on("SIGINT", stop);

#!/usr/bin/env node
// Entry point of the `tidemark` command: runs the compiled CLI (dist/cli,
// made by `node scripts/build-dsp.mjs`, which `npm start`, `npm test` and
// `npm run build` run). Without it (a checkout not built yet) it says so.
import { existsSync } from "node:fs";

const compiled = new URL("../dist/cli/main.js", import.meta.url);
if (!existsSync(compiled)) {
  process.stderr.write("tidemark: not built yet; run `node scripts/build-dsp.mjs` (or npm run build) first\n");
  process.exit(2);
}
await import(compiled.href);

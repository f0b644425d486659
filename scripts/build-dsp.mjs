// Compiles the parts of Tidemark that start often and must start fast to
// plain JavaScript in dist/ (esbuild; nothing is transpiled at run time):
// - dist/cli/: the `tidemark` command (bin/tidemark.js runs dist/cli/main.js;
//   its subcommands stay separate chunks, loaded when they run);
// - dist/jobs/render-task.js: the worker threads' task (the worker process
//   hands piscina this file when it exists).
// Run by `npm start` and `npm test` before anything else is built, and by
// `npm run build`. Plain Node; no TypeScript needed to run it.
import { build } from "esbuild";
import { fileURLToPath } from "node:url";

const root = fileURLToPath(new URL("..", import.meta.url));
const common = {
  absWorkingDir: root,
  bundle: true,
  platform: "node",
  format: "esm",
  target: "node20",
  sourcemap: "linked",
  logLevel: "warning",
  // Bundled CommonJS dependencies (zod is ESM; this covers the rest) may call require().
  banner: { js: 'import { createRequire as __tidemarkRequire } from "node:module"; const require = __tidemarkRequire(import.meta.url);' },
};

const started = Date.now();
await Promise.all([
  build({ ...common, entryPoints: { main: "dsp/cli/main.ts" }, outdir: "dist/cli", splitting: true, chunkNames: "chunks/[name]-[hash]" }),
  build({ ...common, entryPoints: { "render-task": "app/jobs/render-task.ts" }, outdir: "dist/jobs", external: ["piscina"] }),
]);
console.error(`[tidemark] compiled the command and the render task to dist/ in ${Date.now() - started} ms`);

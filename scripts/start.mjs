#!/usr/bin/env node
// `npm start`: installs what is missing, starts PostgreSQL and the local fakes
// on loopback, migrates, seeds the demo when empty, builds, and serves.
// A child that dies (web, worker, a fake) is started again with back-off;
// only Ctrl-C or SIGTERM stops everything, all of it within 5 s.
import { existsSync, readFileSync, writeFileSync, mkdirSync } from "node:fs";
import { randomBytes } from "node:crypto";
import path from "node:path";
import { root, portOffset, log, fail, run, ensureNodeModules, portFree, supervise, stopChildren } from "./lib.mjs";
import { ensurePostgres, ensureDatabase, databaseUrl } from "./postgres.mjs";
import { startFakes } from "./fakes.mjs";

const port = Number(process.env.PORT ?? 3000 + portOffset);
const dev = process.argv.includes("--dev");

if (!(await portFree(port))) fail(`port ${port} is already in use: stop what runs there or set PORT=…`);
ensureNodeModules();

const children = [];
let pg = null;
let stopping = false;
async function stopAll(code = 0) {
  if (stopping) return;
  stopping = true;
  log("stopping");
  await stopChildren(children, 4_000);
  pg?.stop();
  process.exit(code);
}
process.on("SIGINT", () => stopAll(0));
process.on("SIGTERM", () => stopAll(0));

const env = { ...process.env, PORT: String(port), HOST: process.env.HOST ?? "127.0.0.1" };
// The production server refuses to start without a secret: keep a random one
// for this checkout in the git-ignored .data/ unless one is given.
if (!env.SESSION_SECRET) {
  const secretFile = path.join(root, ".data", "session-secret");
  if (!existsSync(secretFile)) {
    mkdirSync(path.dirname(secretFile), { recursive: true });
    writeFileSync(secretFile, randomBytes(32).toString("hex"), { mode: 0o600 });
  }
  env.SESSION_SECRET = readFileSync(secretFile, "utf8").trim();
}
// Plain http on loopback: the cookie cannot be Secure here.
if (env.HOST === "127.0.0.1" || env.HOST === "localhost") env.TIDEMARK_INSECURE_COOKIES ??= "1";
if (!process.env.DATABASE_URL) {
  pg = await ensurePostgres();
  ensureDatabase(pg, "tidemark");
  env.DATABASE_URL = databaseUrl("tidemark");
}
env.TIDEMARK_PUBLIC_URL ??= `http://${env.HOST}:${port}`;
// The production server wants a sender; the local fake accepts any.
env.MAIL_FROM ??= "Tidemark <studio@tidemark.test>";
Object.assign(env, await startFakes(children, "dev", { publicUrl: env.TIDEMARK_PUBLIC_URL }));
run("npx", ["tsx", "scripts/migrate.ts", "--seed"], { env });

function launch(name, cmd, args) {
  const child = supervise(name, cmd, args, { env, stdio: "inherit" });
  children.push(child);
  return child;
}

if (dev) {
  launch("web", "npx", ["react-router", "dev", "--host", env.HOST, "--port", String(port)]);
} else {
  run("node", ["scripts/build-dsp.mjs"], { env });
  run("npx", ["react-router", "build"], { env });
  // Our own server (server/main.mjs): client addresses, body limits, origin checks, headers.
  launch("web", process.execPath, ["server/main.mjs", "./build/server/index.js"]);
}
if (existsSync(path.join(root, "app/jobs/worker.server.ts"))) launch("worker", "npx", ["tsx", "app/jobs/worker.server.ts"]);
log(`Tidemark on http://${env.HOST}:${port}  (Ctrl-C stops it)`);

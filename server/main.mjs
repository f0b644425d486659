#!/usr/bin/env node
// Serves the production build: `node server/main.mjs [./build/server/index.js]`.
// TIDEMARK_WEB_PROCESSES > 1 runs that many processes on one port (Node's
// cluster; a process that dies is replaced). SIGTERM or SIGINT: stop taking
// connections, let answers in flight finish for up to 3 s, then close the
// rest; every process is gone within 5 s.
import cluster from "node:cluster";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { createRequestHandler } from "react-router";
import { createServerApp } from "./app.mjs";

const buildPath = path.resolve(process.argv[2] ?? "build/server/index.js");
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const processes = Math.max(1, Number(process.env.TIDEMARK_WEB_PROCESSES ?? 1) || 1);
const GRACE_MS = 3_000;

function log(message) {
  process.stderr.write(`[tidemark web${cluster.isWorker ? ` ${cluster.worker.id}` : ""}] ${message}\n`);
}

if (cluster.isPrimary && processes > 1) {
  let stopping = false;
  const fork = () => cluster.fork();
  for (let i = 0; i < processes; i += 1) fork();
  cluster.on("exit", (worker, code, signal) => {
    if (stopping) return;
    log(`process ${worker.process.pid} stopped (${code ?? signal}); starting another`);
    setTimeout(fork, 500);
  });
  const stop = () => {
    if (stopping) return;
    stopping = true;
    for (const worker of Object.values(cluster.workers ?? {})) worker?.process.kill("SIGTERM");
    setTimeout(() => process.exit(0), GRACE_MS + 1_000).unref();
    cluster.on("exit", () => {
      if (Object.keys(cluster.workers ?? {}).length === 0) process.exit(0);
    });
  };
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
} else {
  const build = await import(pathToFileURL(buildPath).href);
  const handle = createRequestHandler(build, process.env.NODE_ENV ?? "production");
  const app = createServerApp({
    handler: (request) => handle(request),
    // Relative to the project folder, as React Router's own server reads it.
    assetsDir: path.resolve(build.assetsBuildDirectory ?? "build/client"),
    trustedProxies: process.env.TIDEMARK_TRUSTED_PROXIES ?? "",
    uploadMaxBytes: Number(process.env.UPLOAD_MAX_BYTES) > 0 ? Number(process.env.UPLOAD_MAX_BYTES) : undefined,
  });
  const server = app.listen(port, host, () => {
    if (!cluster.isWorker || cluster.worker.id === 1) log(`listening on http://${host}:${port}${processes > 1 ? ` (${processes} processes)` : ""}`);
  });
  // A slow client cannot hold a connection open by trickling its headers.
  server.headersTimeout = 30_000;
  server.requestTimeout = 0; // uploads may take long; the body limits bound everything else
  let stopping = false;
  const stop = () => {
    if (stopping) return;
    stopping = true;
    server.close(() => process.exit(0));
    server.closeIdleConnections();
    setTimeout(() => server.closeAllConnections(), GRACE_MS).unref();
    setTimeout(() => process.exit(0), GRACE_MS + 1_000).unref();
  };
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

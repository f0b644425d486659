// Shared helpers of the start and test commands: plain Node (no packages),
// because they run before `node_modules` exists.
import { spawn, spawnSync, execFileSync } from "node:child_process";
import { existsSync, statSync, readdirSync, mkdirSync, chownSync } from "node:fs";
import { createHash } from "node:crypto";
import net from "node:net";
import path from "node:path";
import os from "node:os";

export const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), "..");
/**
 * TIDEMARK_PORT_OFFSET shifts every default port (our PostgreSQL, the fakes,
 * the test and start servers), so two checkouts on one machine can run
 * their services side by side.
 */
export const portOffset = Number(process.env.TIDEMARK_PORT_OFFSET ?? 0);

export const isRoot = typeof process.getuid === "function" && process.getuid() === 0;

export function log(message) {
  process.stderr.write(`[tidemark] ${message}\n`);
}

export function fail(message) {
  log(`error: ${message}`);
  process.exit(1);
}

export function run(cmd, args, options = {}) {
  const result = spawnSync(cmd, args, { stdio: "inherit", cwd: root, ...options });
  if (result.status !== 0) fail(`${cmd} ${args.join(" ")} exited with ${result.status ?? result.signal}`);
}

export function which(cmd) {
  const r = spawnSync("sh", ["-c", `command -v ${cmd}`], { encoding: "utf8" });
  return r.status === 0 ? r.stdout.trim() : null;
}

let aptUpdated = false;
/** Installs Debian packages that are missing (only possible as root). */
export function aptInstall(packages) {
  if (packages.length === 0) return;
  if (!isRoot) fail(`missing Debian packages: ${packages.join(", ")}; install them (apt-get install ${packages.join(" ")})`);
  log(`installing Debian packages: ${packages.join(", ")}`);
  const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
  if (!aptUpdated) {
    run("apt-get", ["update", "-qq"], { env });
    aptUpdated = true;
  }
  run("apt-get", ["install", "-y", "-qq", "--no-install-recommends", ...packages], { env });
}

/** npm packages: install when node_modules is missing or older than the lock file. */
export function ensureNodeModules() {
  const lock = path.join(root, "package-lock.json");
  const marker = path.join(root, "node_modules", ".package-lock.json");
  if (existsSync(marker) && statSync(marker).mtimeMs >= statSync(lock).mtimeMs) return;
  log("installing npm packages (npm ci)");
  run("npm", ["ci", "--no-audit", "--no-fund"]);
}

export function postgresBinDir() {
  const base = "/usr/lib/postgresql";
  const find = () =>
    existsSync(base)
      ? readdirSync(base)
          .filter((v) => existsSync(path.join(base, v, "bin", "pg_ctl")))
          .sort((a, b) => Number(b) - Number(a))
      : [];
  let versions = find();
  if (versions.length === 0 && !which("pg_ctl")) {
    aptInstall(["postgresql"]);
    versions = find();
  }
  if (versions.length > 0) return path.join(base, versions[0], "bin");
  const pgCtl = which("pg_ctl");
  if (pgCtl) return path.dirname(execFileSync("readlink", ["-f", pgCtl], { encoding: "utf8" }).trim());
  fail("PostgreSQL could not be found or installed");
}

export function portFree(port, host = "127.0.0.1") {
  return new Promise((resolve) => {
    const server = net.createServer();
    server.once("error", () => resolve(false));
    server.once("listening", () => server.close(() => resolve(true)));
    server.listen(port, host);
  });
}

export async function waitForPort(port, timeoutMs = 30_000, host = "127.0.0.1") {
  const start = Date.now();
  while (Date.now() - start < timeoutMs) {
    const ok = await new Promise((resolve) => {
      const socket = net.connect(port, host);
      socket.once("connect", () => { socket.end(); resolve(true); });
      socket.once("error", () => resolve(false));
    });
    if (ok) return;
    await new Promise((r) => setTimeout(r, 200));
  }
  throw new Error(`nothing listens on ${host}:${port} after ${timeoutMs} ms`);
}

/**
 * The cluster lives in the project's git-ignored .data/pg. When that folder
 * cannot be reached by the `postgres` user (a checkout under a private home),
 * a folder under /tmp named after the checkout is used instead.
 */
export function clusterDir() {
  const preferred = path.join(root, ".data", "pg");
  if (!isRoot) return preferred;
  mkdirSync(path.dirname(preferred), { recursive: true });
  const probe = spawnSync("runuser", ["-u", "postgres", "--", "test", "-x", path.dirname(preferred)]);
  if (probe.status === 0) return preferred;
  const hash = createHash("sha1").update(root).digest("hex").slice(0, 10);
  return path.join(os.tmpdir(), `tidemark-pg-${hash}`);
}

export function asPostgres(cmd, args, options = {}) {
  if (!isRoot) return spawnSync(cmd, args, { encoding: "utf8", ...options });
  return spawnSync("runuser", ["-u", "postgres", "--", cmd, ...args], { encoding: "utf8", ...options });
}

/**
 * Starts a long-running child in its own process group, so that stopping it
 * also stops what it started (npx and tsx run the real program as a grandchild).
 */
export function spawnService(cmd, args, options = {}) {
  const child = spawn(cmd, args, { cwd: root, detached: true, ...options });
  child.stopGroup = (signal = "SIGTERM") => {
    if (child.exitCode !== null || child.signalCode !== null) return;
    try {
      process.kill(-child.pid, signal);
    } catch {
      child.kill(signal);
    }
  };
  return child;
}

export { spawn, mkdirSync, chownSync, existsSync };

/** True while any process of the child's group is alive. */
function groupAlive(child) {
  if (!child?.pid) return false;
  try {
    process.kill(-child.pid, 0);
    return true;
  } catch {
    return child.exitCode === null && child.signalCode === null;
  }
}

/**
 * A long-running child that is started again when it dies on its own, after
 * a back-off that doubles from 0.5 s to 15 s (and starts over once it has
 * run for 30 s), each time logged. Only `stopGroup` ends it for good.
 */
export function supervise(name, cmd, args, options = {}) {
  const handle = { name, child: null, stopping: false, restarts: 0, timer: null };
  let backoffMs = 500;
  const startOne = () => {
    const startedAt = Date.now();
    const child = spawnService(cmd, args, options);
    handle.child = child;
    child.on("exit", (code, signal) => {
      if (handle.stopping) return;
      // What the group started may still run (npx and tsx put the program in a grandchild).
      try {
        process.kill(-child.pid, "SIGKILL");
      } catch {}
      if (Date.now() - startedAt > 30_000) backoffMs = 500;
      log(`${name} stopped (${code ?? signal}); starting it again in ${backoffMs} ms`);
      handle.restarts += 1;
      handle.timer = setTimeout(startOne, backoffMs);
      backoffMs = Math.min(backoffMs * 2, 15_000);
    });
  };
  startOne();
  handle.stopGroup = (signal = "SIGTERM") => {
    handle.stopping = true;
    clearTimeout(handle.timer);
    if (!handle.child) return;
    try {
      process.kill(-handle.child.pid, signal);
    } catch {
      handle.child.kill(signal);
    }
  };
  handle.alive = () => groupAlive(handle.child);
  return handle;
}

/**
 * Stops children (supervised or plain): SIGTERM to each group, then SIGKILL
 * to whatever is left after `graceMs`, so everything is gone within about
 * graceMs + 0.2 s.
 */
export async function stopChildren(children, graceMs = 4_000) {
  for (const child of children) child.stopGroup("SIGTERM");
  const alive = (c) => (c.alive ? c.alive() : groupAlive(c));
  const deadline = Date.now() + graceMs;
  while (Date.now() < deadline && children.some(alive)) await new Promise((r) => setTimeout(r, 100));
  for (const child of children.filter(alive)) {
    const pid = child.child?.pid ?? child.pid;
    log(`${child.name ?? "a child"} did not stop in ${graceMs} ms; killing it`);
    try {
      process.kill(-pid, "SIGKILL");
    } catch {}
  }
}

// Our own PostgreSQL: Debian's package, a cluster in a git-ignored folder,
// listening on 127.0.0.1 only, on a port of its own. DATABASE_URL skips all this.
import path from "node:path";
import { writeFileSync, appendFileSync } from "node:fs";
import { portOffset, postgresBinDir, clusterDir, asPostgres, isRoot, log, fail, mkdirSync, chownSync, existsSync, waitForPort } from "./lib.mjs";

export const PG_PORT = Number(process.env.TIDEMARK_PG_PORT ?? 54329 + portOffset);

function pgUid() {
  const r = asPostgres("id", ["-u"]);
  return Number(r.stdout.trim());
}

/** Starts the cluster if needed. Returns { started, stop() }. */
export async function ensurePostgres() {
  const bin = postgresBinDir();
  const dataDir = clusterDir();
  const socketDir = path.join(dataDir, "..", "pg-socket");
  if (!existsSync(path.join(dataDir, "PG_VERSION"))) {
    log(`creating the PostgreSQL cluster in ${dataDir}`);
    mkdirSync(dataDir, { recursive: true });
    if (isRoot) {
      const uid = pgUid();
      chownSync(dataDir, uid, uid);
    }
    const init = asPostgres(path.join(bin, "initdb"), ["-D", dataDir, "-U", "postgres", "--auth=trust", "-E", "UTF8", "--locale=C.UTF-8"]);
    if (init.status !== 0) fail(`initdb failed:\n${init.stdout}\n${init.stderr}`);
    // Loopback only; our own port; the socket in our folder, not the system's.
    appendFileSync(
      path.join(dataDir, "postgresql.conf"),
      `\nlisten_addresses = '127.0.0.1'\nport = ${PG_PORT}\nfsync = off\nsynchronous_commit = off\nmax_connections = 200\n`,
    );
  }
  mkdirSync(socketDir, { recursive: true });
  if (isRoot) {
    const uid = pgUid();
    chownSync(socketDir, uid, uid);
  }
  const status = asPostgres(path.join(bin, "pg_ctl"), ["-D", dataDir, "status"]);
  let started = false;
  if (status.status !== 0) {
    log(`starting PostgreSQL on 127.0.0.1:${PG_PORT}`);
    const logFile = path.join(dataDir, "..", "postgres.log");
    if (isRoot) {
      writeFileSync(logFile, "", { flag: "a" });
      chownSync(logFile, pgUid(), pgUid());
    }
    const r = asPostgres(path.join(bin, "pg_ctl"), ["-D", dataDir, "-l", logFile, "-w", "-t", "60", "-o", `-k ${socketDir}`, "start"]);
    if (r.status !== 0) fail(`PostgreSQL did not start (port ${PG_PORT} taken?); see ${logFile}\n${r.stdout}${r.stderr}`);
    started = true;
  }
  await waitForPort(PG_PORT);
  return {
    started,
    stop() {
      if (!started) return;
      log("stopping PostgreSQL");
      asPostgres(path.join(bin, "pg_ctl"), ["-D", dataDir, "-m", "fast", "stop"]);
    },
    psql(database, sql) {
      return asPostgres(path.join(bin, "psql"), ["-h", "127.0.0.1", "-p", String(PG_PORT), "-U", "postgres", "-d", database, "-v", "ON_ERROR_STOP=1", "-Atc", sql]);
    },
  };
}

export function databaseUrl(name) {
  return `postgres://postgres@127.0.0.1:${PG_PORT}/${name}`;
}

/** Creates the database when missing (fresh: drop it first). */
export function ensureDatabase(pg, name, { fresh = false } = {}) {
  if (fresh) {
    const drop = pg.psql("postgres", `DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
    if (drop.status !== 0) fail(`could not drop ${name}: ${drop.stderr}`);
  }
  const exists = pg.psql("postgres", `SELECT 1 FROM pg_database WHERE datname = '${name}'`);
  if (exists.stdout.trim() !== "1") {
    const r = pg.psql("postgres", `CREATE DATABASE ${name}`);
    if (r.status !== 0) fail(`could not create ${name}: ${r.stderr}`);
  }
}

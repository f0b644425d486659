// Password hashing with bcrypt (cost 10, the floor the project accepts), off
// the web process's main thread: a small piscina pool of worker threads runs
// bcryptjs, so a burst of sign-ins cannot stall every other request. Its
// queue is bounded; past it a hash is refused at once (PasswordBusyError)
// instead of waiting behind a flood.
import { createRequire } from "node:module";
import { pathToFileURL } from "node:url";
import { availableParallelism, tmpdir } from "node:os";
import { createHash } from "node:crypto";
import { existsSync, renameSync, writeFileSync } from "node:fs";
import path from "node:path";
import { Piscina } from "piscina";

export const BCRYPT_COST = 10;
/** Hashes waiting for a thread beyond this are refused. */
export const PASSWORD_QUEUE_LIMIT = 32;

export class PasswordBusyError extends Error {
  constructor() {
    super("Too many sign-ins at once; try again in a moment.");
    this.name = "PasswordBusyError";
  }
}

// The worker's code is written to a temporary module that imports bcryptjs by
// its absolute file URL: no separate file to find beside the bundled server build.
const bcryptUrl = pathToFileURL(createRequire(import.meta.url).resolve("bcryptjs")).href;
const workerSource = `
import bcrypt from ${JSON.stringify(bcryptUrl)};
export default function run(task) {
  if (task.op === "hash") return bcrypt.hash(task.password, task.cost);
  return bcrypt.compare(task.password, task.hash);
}`;

function workerFile(): string {
  const file = path.join(tmpdir(), `tidemark-password-worker-${createHash("sha256").update(workerSource).digest("hex").slice(0, 16)}.mjs`);
  if (!existsSync(file)) {
    const partial = `${file}.${process.pid}`;
    writeFileSync(partial, workerSource);
    renameSync(partial, file);
  }
  return file;
}

let pool: Piscina | undefined;
function passwordPool(): Piscina {
  pool ??= new Piscina({
    filename: workerFile(),
    minThreads: 1,
    maxThreads: Math.max(1, Math.min(2, availableParallelism() - 1)),
    maxQueue: PASSWORD_QUEUE_LIMIT,
    idleTimeout: 60_000,
  });
  return pool;
}

async function runTask<T>(task: object): Promise<T> {
  const p = passwordPool();
  if (p.queueSize >= PASSWORD_QUEUE_LIMIT) throw new PasswordBusyError();
  try {
    return (await p.run(task)) as T;
  } catch (error) {
    if (error instanceof Error && /queue is at limit/i.test(error.message)) throw new PasswordBusyError();
    throw error;
  }
}

export function hashPassword(password: string): Promise<string> {
  return runTask<string>({ op: "hash", password, cost: BCRYPT_COST });
}

export function verifyPassword(password: string, hash: string): Promise<boolean> {
  return runTask<boolean>({ op: "compare", password, hash });
}

// Compared against when the e-mail is unknown, so both cases cost the same
// time. A fixed cost-10 hash of a throwaway string (made once, not a secret).
const unknownUserHash = "$2b$10$uHRTaJdbgA1gsILXQ17plOCZz8BQiWkj3CowSiCmCY4zD7gH2qVji";

export async function burnPasswordCheck(password: string): Promise<void> {
  await verifyPassword(password, unknownUserHash);
}

/** For tests and shutdown: the pool's threads end. */
export async function closePasswordPool(): Promise<void> {
  await pool?.destroy();
  pool = undefined;
}

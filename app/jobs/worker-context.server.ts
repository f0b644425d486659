// What a job handler needs from the worker process it runs in.
import type PgBoss from "pg-boss";
import type { Piscina } from "piscina";
import type { StorageDriver } from "../lib/storage/storage.server.ts";
import type { QueueSettings } from "../lib/queue.server.ts";

/** Why a running job was aborted; anything else is a failure of the job itself. */
export type AbortReason = "cancelled" | "superseded" | "gone" | "shutdown";

export type WorkerContext = {
  boss: PgBoss;
  pool: Piscina;
  storage: StorageDriver;
  settings: QueueSettings;
  /** Folder for temporary copies of inputs and outputs. */
  tmpDir: string;
  /** Registers a running job's abort, so shutdown can stop it; returns the unregister. */
  track(abort: AbortController): () => void;
};

/** A message an engineer can read, from whatever a job threw. */
export function readableError(error: unknown): string {
  if (error && typeof error === "object" && "issues" in error && Array.isArray((error as { issues: unknown[] }).issues)) {
    const issues = (error as { issues: { path?: PropertyKey[]; message: string }[] }).issues;
    return `The chain is not valid: ${issues.map((i) => (i.path?.length ? `${i.path.join(".")}: ${i.message}` : i.message)).join("; ")}`;
  }
  const message = error instanceof Error ? error.message : String(error);
  return message.length > 0 ? message : "unknown error";
}

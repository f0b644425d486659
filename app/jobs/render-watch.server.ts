// While a render runs: writes its progress to the row at most twice a
// second, and through the same write learns when the row is no longer this
// attempt's to work on (cancelled by the engineer, or given to another worker
// after this one was thought dead). Then it calls `onLost`, which aborts.
import { db } from "../lib/db.server.ts";

export const PROGRESS_WRITE_INTERVAL_MS = 500;

export type RenderWatch = { report(fraction: number): void; stop(): Promise<void> };

export function watchRender(renderId: string, attempt: number, onLost: (reason: "cancelled" | "superseded" | "gone") => void): RenderWatch {
  let latest = 0;
  let stopped = false;
  let pending: Promise<void> = Promise.resolve();

  const tick = async () => {
    const fraction = latest;
    const updated = await db("renders")
      .where({ id: renderId, state: "running", attempts: attempt })
      // Progress only grows within an attempt; the check keeps a late write from moving it back.
      .update({ progress: db.raw("GREATEST(progress, ?)", [fraction]) }, ["id"]);
    if (updated.length > 0) return;
    const row = await db("renders").where({ id: renderId }).first<{ state: string; attempts: number } | undefined>("state", "attempts");
    if (stopped) return;
    onLost(!row ? "gone" : row.state === "cancelled" ? "cancelled" : "superseded");
    stopped = true;
  };

  const timer = setInterval(() => {
    if (stopped) return;
    // The write doubles as the check for cancel, so it runs even without new progress.
    pending = pending.then(tick).catch((error) => console.error(`[tidemark] worker: progress of render ${renderId}: ${(error as Error).message}`));
  }, PROGRESS_WRITE_INTERVAL_MS);

  return {
    report(fraction: number) {
      latest = Math.max(latest, Math.min(1, fraction));
    },
    async stop() {
      stopped = true;
      clearInterval(timer);
      await pending;
    },
  };
}

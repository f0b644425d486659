// The analysis state of a stored file's row (mix versions, reference
// tracks): pending → running (claimed by a worker's job) → done, or failed
// after the last try; a failed try goes back to pending while a retry waits.
// One set of transitions for every table that carries these columns.
import { db } from "../lib/db.server.ts";
import { toJsonValue } from "../jobs/json.ts";

type AnalysedTable = "mixes" | "reference_tracks";

export function analysisStateOf(table: AnalysedTable) {
  return {
    /** Claims the analysis for a worker's job; the row (selected columns), or undefined when there is nothing (left) to do. */
    async claim<Row>(id: string, jobId: string, columns: readonly string[]): Promise<Row | undefined> {
      const [row] = await db(table)
        .where({ id })
        .whereIn("analysis_state", ["pending", "running", "failed"])
        .update({ analysis_state: "running", analysis_error: null, analysis_job_id: jobId })
        .returning<Row[]>(columns as string[]);
      return row as Row | undefined;
    },
    async save(id: string, analysis: unknown): Promise<void> {
      await db(table)
        .where({ id })
        .update({ analysis: JSON.stringify(toJsonValue(analysis)), analysis_state: "done", analysis_error: null });
    },
    async markFailed(id: string, message: string): Promise<void> {
      await db(table).where({ id }).whereNot({ analysis_state: "done" }).update({ analysis_state: "failed", analysis_error: message });
    },
    /** Back to "pending" while a retry waits (the worker stopped or the attempt failed). */
    async markRetrying(id: string, message: string): Promise<void> {
      await db(table).where({ id, analysis_state: "running" }).update({ analysis_state: "pending", analysis_error: message });
    },
  };
}

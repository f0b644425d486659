// Brings rows in line with the queue after workers died. pg-boss expires a
// job whose worker stopped answering and retries it or, after its last try,
// fails it; nobody is left to update the row then. The sweeper, run by every
// worker process every few seconds, does it:
//   job failed, row unfinished          → row failed, with a message to read
//   job waiting for a retry, row running → row queued (a mix: pending) again
import { db } from "../lib/db.server.ts";
import type { QueueSettings } from "../lib/queue.server.ts";

const TIMEOUT_OUTPUT = "job failed by timeout in active state";

export type SweepResult = { rendersFailed: number; rendersRequeued: number; mixesFailed: number };

export async function sweep(settings: QueueSettings): Promise<SweepResult> {
  const failed = await db.raw<{ rows: unknown[] }>(
    `UPDATE renders r SET
        state = 'failed',
        finished_at = now(),
        error = CASE
          WHEN j.output->'value'->>'message' = ? OR j.output->>'message' IS NULL
            THEN format('The render stopped without finishing after %s attempts: the worker rendering it stopped answering or ran past its time limit of %s s. Start it again when the workers are running.',
                        r.attempts, extract(epoch FROM j.expire_in)::int)
          ELSE coalesce(r.error, j.output->>'message')
        END
      FROM pgboss.job j
      WHERE j.name = ? AND j.id = r.job_id AND j.state = 'failed' AND r.state IN ('queued', 'running')
      RETURNING r.id`,
    [TIMEOUT_OUTPUT, settings.renderQueue],
  );
  const requeued = await db.raw<{ rows: unknown[] }>(
    `UPDATE renders r SET state = 'queued', progress = 0,
        error = 'The worker rendering it stopped; the render waits for another try.'
      FROM pgboss.job j
      WHERE j.name = ? AND j.id = r.job_id AND j.state = 'retry' AND r.state = 'running'
      RETURNING r.id`,
    [settings.renderQueue],
  );
  const mixes = await db.raw<{ rows: unknown[] }>(
    `UPDATE mixes m SET analysis_state = 'failed',
        analysis_error = coalesce(m.analysis_error, 'The analysis stopped without finishing: the worker measuring it stopped answering.')
      FROM pgboss.job j
      WHERE j.name = ? AND j.id = m.analysis_job_id AND j.state = 'failed' AND m.analysis_state IN ('pending', 'running')
      RETURNING m.id`,
    [settings.analyzeQueue],
  );
  await db.raw(
    `UPDATE mixes m SET analysis_state = 'pending', analysis_error = 'The worker measuring it stopped; the analysis waits for another try.'
      FROM pgboss.job j
      WHERE j.name = ? AND j.id = m.analysis_job_id AND j.state = 'retry' AND m.analysis_state = 'running'`,
    [settings.analyzeQueue],
  );
  return { rendersFailed: failed.rows.length, rendersRequeued: requeued.rows.length, mixesFailed: mixes.rows.length };
}

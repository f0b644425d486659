// One delivery job: a track's print through one delivery format, made by
// makeDelivery in this process (it streams from a temporary copy, so nothing
// is held whole). The delivery row records done or failed; the job only
// retries while tries are left and the row is not finished.
import type PgBoss from "pg-boss";
import { db } from "../lib/db.server.ts";
import { makeDelivery } from "../lib/delivery/make-delivery.server.ts";
import { deliverJobData } from "../lib/queue.server.ts";
import { readableError, type WorkerContext } from "./worker-context.server.ts";

export async function runDeliveryJob(job: PgBoss.JobWithMetadata<unknown>, ctx: WorkerContext): Promise<void> {
  const queueName = ctx.settings.deliverQueue;
  const data = deliverJobData.safeParse(job.data);
  if (!data.success) {
    await ctx.boss.fail(queueName, job.id, { message: "the job does not name a delivery" });
    return;
  }
  const row = await db("deliveries").where({ id: data.data.deliveryId }).first<{ state: string } | undefined>("state");
  // Gone, or already made by an earlier try: nothing left to do.
  if (!row || row.state === "done") {
    await ctx.boss.complete(queueName, job.id);
    return;
  }
  try {
    await makeDelivery(data.data.deliveryId, { storage: ctx.storage });
    await ctx.boss.complete(queueName, job.id);
  } catch (error) {
    const message = readableError(error);
    // makeDelivery has marked the row failed; a retry sets it running again.
    await ctx.boss.fail(queueName, job.id, { message });
  }
}

// Which print each track of a release is delivered from, or why it is left
// out. Only tracks whose version under review is the approved one are
// delivered (a print per format of each), from the approved recipe — the mix
// version, chain revision and loudness target the client approved (see
// app/lib/review/state.ts):
// - the approved render itself when it is a finished print;
// - else the newest finished print of the same recipe (made before or after
//   the approval: rendering never clears an approval);
// - else the print is still to be made: `printRecipe` names it, and
//   queueReleaseDeliveries renders it and delivers once it is done.
// The review state is derived as on the review pages (getTrackReview).
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { deliveryRecipe, type ReviewStatus } from "../lib/review/state.ts";
import { getTrackReview } from "./review.server.ts";

type Conn = Knex | Knex.Transaction;

/** What a print is made from. */
export type PrintRecipe = { mixId: string; chainRevisionId: string; targetLufs: number | null };

export type TrackDeliveryPlan = {
  trackId: string;
  position: number;
  title: string;
  review: ReviewStatus;
  /** The print to deliver from; null when the track is left out or its print is still to be made. */
  sourceRenderId: string | null;
  /** Approved with no finished print yet: the recipe to print (a print on its way is `printInProgressId`). */
  printRecipe: PrintRecipe | null;
  /** A print of the approved recipe that is queued or running. */
  printInProgressId: string | null;
  /** Why the track is left out (null when it is delivered, now or once its print is made). */
  reason: string | null;
};

const NOT_APPROVED: Record<Exclude<ReviewStatus, "approved">, string> = {
  in_progress: "Not approved yet: nothing has been sent for review.",
  sent: "Not approved yet: the client has not given a verdict on the version sent for review.",
  changes_asked: "Not approved: the client asked for changes.",
};

type RenderFacts = { id: string; kind: "preview" | "print"; state: string; output_key: string | null; mix_id: string; chain_revision_id: string; target_lufs: number | null };

/** The finished print an approved render stands for (or a print on its way), and its recipe. */
async function printOfApproved(conn: Conn, approvedRenderId: string): Promise<{ done: string | null; inProgress: string | null; recipe: PrintRecipe } | null> {
  const approved = await conn("renders").where({ id: approvedRenderId }).first<RenderFacts | undefined>("id", "kind", "state", "output_key", "mix_id", "chain_revision_id", "target_lufs");
  if (!approved) return null;
  const recipe = { mixId: approved.mix_id, chainRevisionId: approved.chain_revision_id, targetLufs: approved.target_lufs };
  if (approved.kind === "print" && approved.state === "done" && approved.output_key) return { done: approved.id, inProgress: null, recipe };
  const prints = () =>
    conn("renders")
      .where({ mix_id: approved.mix_id, chain_revision_id: approved.chain_revision_id, kind: "print" })
      .whereRaw("target_lufs IS NOT DISTINCT FROM ?", [approved.target_lufs]);
  const done = await prints()
    .where({ state: "done" })
    .whereNotNull("output_key")
    .orderBy([{ column: "finished_at", order: "desc", nulls: "last" }, { column: "queued_at", order: "desc" }])
    .first<{ id: string } | undefined>("id");
  if (done) return { done: done.id, inProgress: null, recipe };
  const coming = await prints().whereIn("state", ["queued", "running"]).orderBy("queued_at", "desc").first<{ id: string } | undefined>("id");
  return { done: null, inProgress: coming?.id ?? null, recipe };
}

/** Every track of the release in order, with the print it is delivered from or the reason it is not. */
export async function releaseDeliveryPlan(releaseId: string, conn: Conn = db): Promise<TrackDeliveryPlan[]> {
  const tracks = await conn("tracks").where({ release_id: releaseId }).orderBy("position").select<{ id: string; position: number; title: string }[]>("id", "position", "title");
  const plan: TrackDeliveryPlan[] = [];
  // One after another: `conn` may be a transaction on one connection.
  for (const t of tracks) {
    const { state } = await getTrackReview(t.id, conn);
    const base = { trackId: t.id, position: t.position, title: t.title, review: state.status, sourceRenderId: null, printRecipe: null, printInProgressId: null };
    if (!deliveryRecipe(state) || !state.approvedRenderId) {
      const status = state.status === "approved" ? "in_progress" : state.status;
      let reason = NOT_APPROVED[status];
      if (status === "changes_asked" && state.changesNote) reason += ` “${state.changesNote.slice(0, 120)}”`;
      if (status === "sent" && state.approvedVersion) reason = `Version ${state.version} is with the client for review (version ${state.approvedVersion} was approved); delivered once they approve or ask for changes and approve again.`;
      plan.push({ ...base, reason });
      continue;
    }
    const print = await printOfApproved(conn, state.approvedRenderId);
    if (!print) plan.push({ ...base, reason: "The approved render no longer exists." });
    else if (print.done) plan.push({ ...base, sourceRenderId: print.done, reason: null });
    else plan.push({ ...base, printRecipe: print.recipe, printInProgressId: print.inProgress, reason: null });
  }
  return plan;
}

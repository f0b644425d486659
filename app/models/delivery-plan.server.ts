// Which print each track of a release is delivered from, or why it is left
// out. Only approved tracks are delivered (a print per format of each), from
// the master the client approved:
// - the approved render itself when it is a finished print;
// - when the client approved a preview, the newest finished print of the same
//   mix version, chain revision and loudness target, if one exists (made
//   before or after the approval: rendering the approved master again keeps
//   the approval, see app/lib/review/state.ts).
// The review state is derived as on the review pages (getTrackReview).
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import type { ReviewStatus } from "../lib/review/state.ts";
import { getTrackReview } from "./review.server.ts";

type Conn = Knex | Knex.Transaction;

export type TrackDeliveryPlan = {
  trackId: string;
  position: number;
  title: string;
  review: ReviewStatus;
  /** The print to deliver from; null when the track is left out. */
  sourceRenderId: string | null;
  /** Why the track is left out (null when it is delivered). */
  reason: string | null;
};

const NOT_APPROVED: Record<Exclude<ReviewStatus, "approved">, string> = {
  in_progress: "Not approved yet: no master is under review (nothing sent, or a newer mix, or a render of another master, came after the last verdict).",
  sent: "Not approved yet: the client has not given a verdict on the master sent for review.",
  changes_asked: "Not approved: the client asked for changes.",
};

type RenderFacts = { id: string; kind: "preview" | "print"; state: string; output_key: string | null; mix_id: string; chain_revision_id: string; target_lufs: number | null };

/** The print an approved render stands for, or null. */
async function printOfApproved(conn: Conn, approvedRenderId: string): Promise<string | null> {
  const approved = await conn("renders").where({ id: approvedRenderId }).first<RenderFacts | undefined>("id", "kind", "state", "output_key", "mix_id", "chain_revision_id", "target_lufs");
  if (!approved) return null;
  if (approved.kind === "print") return approved.state === "done" && approved.output_key ? approved.id : null;
  const twin = await conn("renders")
    .where({ mix_id: approved.mix_id, chain_revision_id: approved.chain_revision_id, kind: "print", state: "done" })
    .whereNotNull("output_key")
    .whereRaw("target_lufs IS NOT DISTINCT FROM ?", [approved.target_lufs])
    .orderBy([{ column: "finished_at", order: "desc", nulls: "last" }, { column: "queued_at", order: "desc" }])
    .first<{ id: string } | undefined>("id");
  return twin?.id ?? null;
}

/** Every track of the release in order, with the print it is delivered from or the reason it is not. */
export async function releaseDeliveryPlan(releaseId: string, conn: Conn = db): Promise<TrackDeliveryPlan[]> {
  const tracks = await conn("tracks").where({ release_id: releaseId }).orderBy("position").select<{ id: string; position: number; title: string }[]>("id", "position", "title");
  const plan: TrackDeliveryPlan[] = [];
  // One after another: `conn` may be a transaction on one connection.
  for (const t of tracks) {
    const { state } = await getTrackReview(t.id, conn);
    const base = { trackId: t.id, position: t.position, title: t.title, review: state.status };
    if (state.status !== "approved" || !state.approvedRenderId) {
      const status = state.status === "approved" ? "in_progress" : state.status;
      const note = status === "changes_asked" && state.changesNote ? ` “${state.changesNote.slice(0, 120)}”` : "";
      plan.push({ ...base, sourceRenderId: null, reason: NOT_APPROVED[status] + note });
      continue;
    }
    const source = await printOfApproved(conn, state.approvedRenderId);
    plan.push(
      source
        ? { ...base, sourceRenderId: source, reason: null }
        : { ...base, sourceRenderId: null, reason: "Approved as a preview, with no print of the same mix and chain: render the print and send it for approval." },
    );
  }
  return plan;
}

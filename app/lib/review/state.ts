// The review state of one track, derived from what happened to it, in order:
//
//   in_progress ──send──► sent ──approve──► approved
//        ▲                 │  ▲                │
//        │              changes│send           │ render of another master, or new mix
//        │                 ▼  │                ▼
//        │             changes_asked       in_progress
//        └──── new mix version (from any state) ───┘
//
// - Sending a render puts it under review; sending another replaces it.
// - Only the render under review can be approved or sent back with a note.
// - A new mix version returns the track to in_progress from any state: what
//   was heard was made from an older mix.
// - A new render after approval clears the approval (in_progress), unless it
//   renders the approved master again: the same mix version, chain revision
//   and loudness target (its `recipe`; e.g. the print of an approved
//   preview). Before approval a render changes nothing until it is sent.
// The state is a pure function of the events, so nothing is stored twice and
// history is never lost. Events arrive from several tables; one that is not
// allowed where it lands (e.g. an approval that raced a new mix upload) is
// kept in `ignored` with its reason instead of breaking the whole derivation.

export type ReviewStatus = "in_progress" | "sent" | "changes_asked" | "approved";

export type ReviewEvent =
  | { kind: "mix_added"; at: Date; mixId: string }
  | { kind: "render_done"; at: Date; renderId: string; mixId: string; recipe?: string }
  | { kind: "sent"; at: Date; renderId: string; userId: string | null; message: string | null }
  | { kind: "changes_asked"; at: Date; renderId: string; userId: string | null; note: string }
  | { kind: "approved"; at: Date; renderId: string; userId: string | null; recipe?: string };

export type ReviewState = {
  status: ReviewStatus;
  /** The render sent last and not superseded by a new mix (the one the client hears). */
  underReviewRenderId: string | null;
  approvedRenderId: string | null;
  /** What the approved render was made from (see renderRecipe); a render of the same keeps the approval. */
  approvedRecipe: string | null;
  /** The note of the last request for changes while it is the current state. */
  changesNote: string | null;
  /** When the current status began. */
  since: Date | null;
};

export const INITIAL_REVIEW_STATE: ReviewState = { status: "in_progress", underReviewRenderId: null, approvedRenderId: null, approvedRecipe: null, changesNote: null, since: null };

/** The state as a page shows it: without the recipe, an internal key of ids. */
export type ShownReviewState = Omit<ReviewState, "approvedRecipe">;
export function shownReviewState({ approvedRecipe: _recipe, ...shown }: ReviewState): ShownReviewState {
  return shown;
}

/** What makes two renders the same master: mix version, chain revision and loudness target (not the region). */
export function renderRecipe(r: { mixId: string; chainRevisionId: string; targetLufs: number | null }): string {
  return `${r.mixId}|${r.chainRevisionId}|${r.targetLufs ?? ""}`;
}

export type ApplyResult = { ok: true; state: ReviewState } | { ok: false; reason: string };

const back = (at: Date): ReviewState => ({ ...INITIAL_REVIEW_STATE, since: at });

/** One transition; `ok: false` with a reason a person can read when the event is not allowed now. */
export function applyReviewEvent(state: ReviewState, event: ReviewEvent): ApplyResult {
  switch (event.kind) {
    case "mix_added":
      return { ok: true, state: state.status === "in_progress" && !state.underReviewRenderId ? state : back(event.at) };
    case "render_done": {
      const sameMaster = event.recipe !== undefined && event.recipe === state.approvedRecipe;
      return { ok: true, state: state.status === "approved" && !sameMaster ? back(event.at) : state };
    }
    case "sent":
      return { ok: true, state: { status: "sent", underReviewRenderId: event.renderId, approvedRenderId: null, approvedRecipe: null, changesNote: null, since: event.at } };
    case "changes_asked":
    case "approved": {
      if (state.status !== "sent") {
        const why = { in_progress: "nothing is under review", changes_asked: "changes were already asked for", approved: "it is already approved" }[state.status];
        return { ok: false, reason: `This master cannot be ${event.kind === "approved" ? "approved" : "sent back"}: ${why}.` };
      }
      if (state.underReviewRenderId !== event.renderId) return { ok: false, reason: "A newer master was sent for review; listen to that one." };
      if (event.kind === "approved") {
        return { ok: true, state: { status: "approved", underReviewRenderId: event.renderId, approvedRenderId: event.renderId, approvedRecipe: event.recipe ?? null, changesNote: null, since: event.at } };
      }
      if (!event.note.trim()) return { ok: false, reason: "Say what should change." };
      return { ok: true, state: { status: "changes_asked", underReviewRenderId: event.renderId, approvedRenderId: null, approvedRecipe: null, changesNote: event.note, since: event.at } };
    }
  }
}

// At equal times, the work comes before the verdict on it.
const ORDER: Record<ReviewEvent["kind"], number> = { mix_added: 0, render_done: 1, sent: 2, changes_asked: 3, approved: 4 };

export function sortReviewEvents(events: readonly ReviewEvent[]): ReviewEvent[] {
  return [...events].sort((a, b) => a.at.getTime() - b.at.getTime() || ORDER[a.kind] - ORDER[b.kind]);
}

/** The state after all events (sorted by time here), and the events that were not allowed where they fell. */
export function deriveReviewState(events: readonly ReviewEvent[]): { state: ReviewState; ignored: { event: ReviewEvent; reason: string }[] } {
  let state = INITIAL_REVIEW_STATE;
  const ignored: { event: ReviewEvent; reason: string }[] = [];
  for (const event of sortReviewEvents(events)) {
    const result = applyReviewEvent(state, event);
    if (result.ok) state = result.state;
    else ignored.push({ event, reason: result.reason });
  }
  return { state, ignored };
}

export const REVIEW_STATUS_LABEL: Record<ReviewStatus, string> = {
  in_progress: "In progress",
  sent: "Sent for review",
  changes_asked: "Changes asked",
  approved: "Approved",
};

// The review state of one track, derived from what happened to it, in order.
//
// An approval belongs to a *recipe* — the mix version, chain revision and
// loudness target a master is made from (renderRecipe) — and to the render
// the client heard. The rule (docs/decisions/2026-12-02-approval-rule.md):
//
//   in_progress ──send──► sent ──approve──► approved
//                         │  ▲                 │
//                  changes│  │send             │ send a DIFFERENT recipe
//                         ▼  │                 ▼
//                    changes_asked     sent (earlier approval still shown
//                                       as "approved: version N")
//
// - Sending a render puts its recipe under review. Each recipe sent gets a
//   version number on the track, in the order first sent (version 1, 2, …);
//   sending another render of a recipe already sent (the print of a sent
//   preview) keeps its number.
// - Rendering anything, and uploading a new mix, changes nothing: what the
//   client heard and said still stands. Only sending a different recipe opens
//   a new review.
// - Sending the approved recipe again (e.g. its print) keeps the approval.
// - While a newer version is under review, the earlier approval stays
//   visible (approvedVersion) until the new one is approved or changes are
//   asked for. The track is "approved" (and delivered) only while the recipe
//   under review is the approved one.
// - A verdict is given on the version under review (any sent render of its
//   recipe); each "Ask for changes" is one round of changes (changeRounds).
// The state is a pure function of the events, so nothing is stored twice and
// history is never lost. Events arrive from several tables; one that is not
// allowed where it lands (e.g. an approval that raced a newer version) is
// kept in `ignored` with its reason instead of breaking the whole derivation.

export type ReviewStatus = "in_progress" | "sent" | "changes_asked" | "approved";

export type ReviewEvent =
  | { kind: "mix_added"; at: Date; mixId: string }
  | { kind: "render_done"; at: Date; renderId: string; mixId: string; recipe?: string }
  | { kind: "sent"; at: Date; renderId: string; userId: string | null; message: string | null; recipe?: string }
  | { kind: "changes_asked"; at: Date; renderId: string; userId: string | null; note: string; recipe?: string }
  | { kind: "approved"; at: Date; renderId: string; userId: string | null; recipe?: string };

export type ReviewState = {
  status: ReviewStatus;
  /** The render sent last for the version under review (the one the client hears). */
  underReviewRenderId: string | null;
  /** The recipe under review (an internal key of ids). */
  underReviewRecipe: string | null;
  /** The version number of the recipe under review (1 = the first recipe sent). */
  version: number | null;
  /** The approval that stands: the render the client approved, its recipe and version. */
  approvedRenderId: string | null;
  approvedRecipe: string | null;
  approvedVersion: number | null;
  /** The note of the last request for changes while it is the current state. */
  changesNote: string | null;
  /** How many times the client asked for changes (rounds of changes, for invoices). */
  changeRounds: number;
  /** The recipes sent so far, in the order first sent: version N is recipes[N - 1]. */
  recipes: string[];
  /** When the current status began. */
  since: Date | null;
};

export const INITIAL_REVIEW_STATE: ReviewState = {
  status: "in_progress",
  underReviewRenderId: null,
  underReviewRecipe: null,
  version: null,
  approvedRenderId: null,
  approvedRecipe: null,
  approvedVersion: null,
  changesNote: null,
  changeRounds: 0,
  recipes: [],
  since: null,
};

/** The state as a page shows it: without the recipes, internal keys of ids. */
export type ShownReviewState = Omit<ReviewState, "approvedRecipe" | "underReviewRecipe" | "recipes">;
export function shownReviewState({ approvedRecipe: _a, underReviewRecipe: _u, recipes: _r, ...shown }: ReviewState): ShownReviewState {
  return shown;
}

/** What makes two renders the same master: mix version, chain revision and loudness target (not the region). */
export function renderRecipe(r: { mixId: string; chainRevisionId: string; targetLufs: number | null }): string {
  return `${r.mixId}|${r.chainRevisionId}|${r.targetLufs ?? ""}`;
}

/** A render without a known recipe is a recipe of its own. */
const recipeOf = (event: { renderId: string; recipe?: string }) => event.recipe ?? `render:${event.renderId}`;

/** The version number a recipe has (or would get if sent now) on this track. */
export function versionOf(state: ReviewState, recipe: string): number {
  const i = state.recipes.indexOf(recipe);
  return i >= 0 ? i + 1 : state.recipes.length + 1;
}

/**
 * Whether sending a render of this recipe now would ask a client who has
 * approved to review again (the engineer is warned first).
 */
export function sendReopensApproval(state: ReviewState, recipe: string): boolean {
  return state.approvedRecipe !== null && state.approvedRecipe !== recipe && (state.status === "approved" || state.underReviewRecipe !== recipe);
}

/** The recipe the track is delivered from: the approved one, while it is the one under review. */
export function deliveryRecipe(state: ReviewState): string | null {
  return state.status === "approved" ? state.approvedRecipe : null;
}

export type ApplyResult = { ok: true; state: ReviewState } | { ok: false; reason: string };

/** One transition; `ok: false` with a reason a person can read when the event is not allowed now. */
export function applyReviewEvent(state: ReviewState, event: ReviewEvent): ApplyResult {
  switch (event.kind) {
    case "mix_added":
    case "render_done":
      // Work in the studio: nothing the client heard or said changes until something new is sent.
      return { ok: true, state };
    case "sent": {
      const recipe = recipeOf(event);
      const recipes = state.recipes.includes(recipe) ? state.recipes : [...state.recipes, recipe];
      if (recipe === state.approvedRecipe) {
        // The approved master again (its print, or back from a newer version): the approval stands.
        return {
          ok: true,
          state: {
            ...state,
            status: "approved",
            underReviewRenderId: event.renderId,
            underReviewRecipe: recipe,
            version: state.approvedVersion,
            changesNote: null,
            recipes,
            since: state.status === "approved" ? state.since : event.at,
          },
        };
      }
      return {
        ok: true,
        state: {
          ...state,
          status: "sent",
          underReviewRenderId: event.renderId,
          underReviewRecipe: recipe,
          version: recipes.indexOf(recipe) + 1,
          changesNote: null,
          recipes,
          since: event.at,
        },
      };
    }
    case "changes_asked":
    case "approved": {
      if (state.status !== "sent") {
        const why = { in_progress: "nothing is under review", changes_asked: "changes were already asked for", approved: "it is already approved" }[state.status];
        return { ok: false, reason: `This master cannot be ${event.kind === "approved" ? "approved" : "sent back"}: ${why}.` };
      }
      const sameVersion = event.renderId === state.underReviewRenderId || (event.recipe !== undefined && event.recipe === state.underReviewRecipe);
      if (!sameVersion) return { ok: false, reason: "A newer version was sent for review; listen to that one." };
      if (event.kind === "approved") {
        return {
          ok: true,
          state: { ...state, status: "approved", approvedRenderId: event.renderId, approvedRecipe: state.underReviewRecipe, approvedVersion: state.version, changesNote: null, since: event.at },
        };
      }
      if (!event.note.trim()) return { ok: false, reason: "Say what should change." };
      return {
        ok: true,
        state: {
          ...state,
          status: "changes_asked",
          approvedRenderId: null,
          approvedRecipe: null,
          approvedVersion: null,
          changesNote: event.note,
          changeRounds: state.changeRounds + 1,
          since: event.at,
        },
      };
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

/** The status in words, with the approval that still stands while a newer version is under review. */
export function reviewStatusText(state: Pick<ReviewState, "status" | "version" | "approvedVersion">): string {
  const base = state.status === "approved" || state.version === null ? REVIEW_STATUS_LABEL[state.status] : `${REVIEW_STATUS_LABEL[state.status]} (version ${state.version})`;
  if (state.status === "approved") return state.approvedVersion ? `Approved: version ${state.approvedVersion}` : base;
  return state.approvedVersion ? `${base} · approved: version ${state.approvedVersion}` : base;
}

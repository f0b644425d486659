// The approval rule (docs/decisions/2026-12-02-approval-rule.md): an approval
// belongs to a recipe (mix version, chain revision, loudness target) and the
// render the client heard; rendering never clears it; only sending another
// recipe opens a new review; deliveries come from the approved recipe.
import { describe, expect, it } from "vitest";
import {
  applyReviewEvent,
  deliveryRecipe,
  deriveReviewState,
  INITIAL_REVIEW_STATE,
  renderRecipe,
  reviewStatusText,
  sendReopensApproval,
  shownReviewState,
  versionOf,
  type ReviewEvent,
} from "../../app/lib/review/state.ts";

let clock = Date.UTC(2026, 11, 1, 12);
const at = () => new Date((clock += 60_000));
const A = renderRecipe({ mixId: "m1", chainRevisionId: "c1", targetLufs: -14 });
const B = renderRecipe({ mixId: "m1", chainRevisionId: "c2", targetLufs: -14 });
const C = renderRecipe({ mixId: "m2", chainRevisionId: "c2", targetLufs: -14 });
const mix = (mixId: string): ReviewEvent => ({ kind: "mix_added", at: at(), mixId });
const done = (renderId: string, recipe: string): ReviewEvent => ({ kind: "render_done", at: at(), renderId, mixId: recipe.split("|")[0], recipe });
const send = (renderId: string, recipe: string): ReviewEvent => ({ kind: "sent", at: at(), renderId, userId: "eng", message: null, recipe });
const changes = (renderId: string, recipe: string, note = "More low end, please"): ReviewEvent => ({ kind: "changes_asked", at: at(), renderId, userId: "cli", note, recipe });
const approve = (renderId: string, recipe: string): ReviewEvent => ({ kind: "approved", at: at(), renderId, userId: "cli", recipe });
const stateOf = (events: ReviewEvent[]) => deriveReviewState(events).state;

/** Version 1 (recipe A, preview p1) sent and approved. */
const approvedV1 = () => [mix("m1"), done("p1", A), send("p1", A), approve("p1", A)];

describe("approval rule", () => {
  it("render after approval keeps it: a render of another recipe, of the same recipe, or a new mix changes nothing", () => {
    const base = approvedV1();
    for (const extra of [[done("p2", B)], [done("print1", A)], [mix("m2"), done("p3", C)]]) {
      const state = stateOf([...base, ...extra]);
      expect(state).toMatchObject({ status: "approved", approvedRenderId: "p1", approvedRecipe: A, approvedVersion: 1, underReviewRenderId: "p1", version: 1 });
      expect(deliveryRecipe(state)).toBe(A);
    }
  });

  it("sending a new recipe opens a new review; the earlier approval stays visible as approved: version 1", () => {
    const events = [...approvedV1(), done("p2", B)];
    const before = stateOf(events);
    expect(sendReopensApproval(before, B)).toBe(true);
    expect(versionOf(before, B)).toBe(2);
    events.push(send("p2", B));
    const state = stateOf(events);
    expect(state).toMatchObject({ status: "sent", underReviewRenderId: "p2", version: 2, approvedRenderId: "p1", approvedVersion: 1 });
    expect(reviewStatusText(state)).toBe("Sent for review (version 2) · approved: version 1");
    // While version 2 is under review nothing is delivered.
    expect(deliveryRecipe(state)).toBeNull();
    // Approving version 2 replaces the approval…
    expect(stateOf([...events, approve("p2", B)])).toMatchObject({ status: "approved", approvedRenderId: "p2", approvedRecipe: B, approvedVersion: 2 });
    // …asking for changes on it ends the earlier approval too.
    expect(stateOf([...events, changes("p2", B)])).toMatchObject({ status: "changes_asked", approvedRenderId: null, approvedVersion: null, changeRounds: 1 });
  });

  it("sending the approved recipe again (its print) keeps the approval and the version number", () => {
    const events = [...approvedV1(), done("print1", A)];
    expect(sendReopensApproval(stateOf(events), A)).toBe(false);
    const state = stateOf([...events, send("print1", A)]);
    expect(state).toMatchObject({ status: "approved", approvedRenderId: "p1", approvedVersion: 1, version: 1, underReviewRenderId: "print1" });
    expect(deliveryRecipe(state)).toBe(A);
  });

  it("sending the approved recipe back while a newer version is under review returns to the approval", () => {
    const state = stateOf([...approvedV1(), done("p2", B), send("p2", B), send("p1", A)]);
    expect(state).toMatchObject({ status: "approved", approvedVersion: 1, version: 1 });
    expect(deliveryRecipe(state)).toBe(A);
  });

  it("deliveries from the approved recipe: only while the approved recipe is the one under review", () => {
    expect(deliveryRecipe(stateOf([mix("m1"), done("p1", A)]))).toBeNull();
    expect(deliveryRecipe(stateOf([mix("m1"), done("p1", A), send("p1", A)]))).toBeNull();
    expect(deliveryRecipe(stateOf([...approvedV1(), done("p9", C)]))).toBe(A);
  });

  it("a verdict is given on the version under review: any sent render of its recipe", () => {
    // The preview was sent, then its print: the client approves whichever they heard.
    const events = [mix("m1"), done("p1", A), done("print1", A), send("p1", A), send("print1", A)];
    expect(stateOf([...events, approve("p1", A)])).toMatchObject({ status: "approved", approvedRenderId: "p1", approvedVersion: 1 });
    // A verdict on an older version is refused with a reason.
    const v2 = [...events, done("p2", B), send("p2", B)];
    expect(applyReviewEvent(stateOf(v2), approve("p1", A))).toEqual({ ok: false, reason: "A newer version was sent for review; listen to that one." });
  });

  it("counts rounds of changes and numbers versions in the order first sent", () => {
    const events = [mix("m1"), done("p1", A), send("p1", A), changes("p1", A), done("p2", B), send("p2", B), changes("p2", B, "Less top"), done("p3", C), send("p3", C), approve("p3", C)];
    const state = stateOf(events);
    expect(state).toMatchObject({ status: "approved", version: 3, approvedVersion: 3, changeRounds: 2, changesNote: null });
    expect(versionOf(state, A)).toBe(1);
    expect(versionOf(state, "new")).toBe(4);
  });

  it("a resend of the same recipe after changes keeps its version and reopens the review", () => {
    const state = stateOf([mix("m1"), done("p1", A), send("p1", A), changes("p1", A), send("p1", A)]);
    expect(state).toMatchObject({ status: "sent", version: 1, changesNote: null, changeRounds: 1 });
  });
});

describe("review state basics", () => {
  it("starts in progress; mixes and renders alone keep it there", () => {
    expect(deriveReviewState([]).state).toEqual(INITIAL_REVIEW_STATE);
    expect(stateOf([mix("m1"), done("r1", A), done("r2", B)]).status).toBe("in_progress");
  });

  it("refuses verdicts with readable reasons", () => {
    const sent = stateOf([mix("m1"), done("r1", A), send("r1", A)]);
    expect(applyReviewEvent(INITIAL_REVIEW_STATE, approve("r1", A))).toMatchObject({ ok: false, reason: expect.stringMatching(/nothing is under review/) });
    expect(applyReviewEvent(sent, changes("r1", A, "   "))).toEqual({ ok: false, reason: "Say what should change." });
    const approved = applyReviewEvent(sent, approve("r1", A));
    expect(approved.ok).toBe(true);
    if (approved.ok) expect(applyReviewEvent(approved.state, changes("r1", A))).toMatchObject({ ok: false, reason: expect.stringMatching(/already approved/) });
  });

  it("keeps an approval that raced a newer version as ignored, with its reason, and sorts by time", () => {
    const base = Date.UTC(2026, 0, 1);
    const t = (s: number) => new Date(base + s * 1000);
    const events: ReviewEvent[] = [
      { kind: "approved", at: t(40), renderId: "r1", userId: "cli", recipe: A },
      { kind: "sent", at: t(30), renderId: "r2", userId: "eng", message: null, recipe: B },
      { kind: "sent", at: t(20), renderId: "r1", userId: "eng", message: "First pass", recipe: A },
      { kind: "render_done", at: t(10), renderId: "r1", mixId: "m1", recipe: A },
    ];
    const derived = deriveReviewState(events);
    expect(derived.state).toMatchObject({ status: "sent", version: 2 });
    expect(derived.ignored).toHaveLength(1);
    expect(derived.ignored[0].event.kind).toBe("approved");
    // At the same instant, the work sorts before the verdict on it.
    const same = deriveReviewState([
      { kind: "approved", at: t(5), renderId: "r1", userId: "cli" },
      { kind: "sent", at: t(5), renderId: "r1", userId: "eng", message: null },
    ]);
    expect(same.state.status).toBe("approved");
  });

  it("shows no recipe keys to a page", () => {
    const shown = shownReviewState(stateOf(approvedV1()));
    expect(JSON.stringify(shown)).not.toContain("c1");
    expect(shown).not.toHaveProperty("recipes");
  });
});

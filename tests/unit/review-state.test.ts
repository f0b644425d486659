import { describe, expect, it } from "vitest";
import { applyReviewEvent, deriveReviewState, INITIAL_REVIEW_STATE, renderRecipe, type ReviewEvent } from "../../app/lib/review/state.ts";

let clock = Date.UTC(2026, 11, 1, 12);
const at = () => new Date((clock += 60_000));
const mix = (mixId: string): ReviewEvent => ({ kind: "mix_added", at: at(), mixId });
const done = (renderId: string, mixId = "m1", recipe?: string): ReviewEvent => ({ kind: "render_done", at: at(), renderId, mixId, recipe });
const send = (renderId: string): ReviewEvent => ({ kind: "sent", at: at(), renderId, userId: "eng", message: null });
const changes = (renderId: string, note = "More low end, please"): ReviewEvent => ({ kind: "changes_asked", at: at(), renderId, userId: "cli", note });
const approve = (renderId: string, recipe?: string): ReviewEvent => ({ kind: "approved", at: at(), renderId, userId: "cli", recipe });

const statusOf = (events: ReviewEvent[]) => deriveReviewState(events).state.status;

describe("review state", () => {
  it("starts in progress; a mix and renders alone keep it there", () => {
    expect(deriveReviewState([]).state).toEqual(INITIAL_REVIEW_STATE);
    expect(statusOf([mix("m1"), done("r1"), done("r2")])).toBe("in_progress");
  });

  it("goes sent → changes asked → sent → approved, keeping the note and the approved render", () => {
    const events = [mix("m1"), done("r1"), send("r1")];
    expect(deriveReviewState(events).state).toMatchObject({ status: "sent", underReviewRenderId: "r1", approvedRenderId: null });
    events.push(changes("r1", "The vocal is too far back"));
    expect(deriveReviewState(events).state).toMatchObject({ status: "changes_asked", changesNote: "The vocal is too far back" });
    events.push(done("r2"));
    // A new render while changes are asked: still the engineer's move until it is sent.
    expect(statusOf(events)).toBe("changes_asked");
    events.push(send("r2"), approve("r2"));
    const { state, ignored } = deriveReviewState(events);
    expect(state).toMatchObject({ status: "approved", approvedRenderId: "r2", underReviewRenderId: "r2", changesNote: null });
    expect(state.since).toEqual(events.at(-1)!.at);
    expect(ignored).toEqual([]);
  });

  it("clears the approval when a render of another master finishes", () => {
    const events = [mix("m1"), done("r1"), send("r1"), approve("r1"), done("r2")];
    expect(deriveReviewState(events).state).toMatchObject({ status: "in_progress", approvedRenderId: null, underReviewRenderId: null });
    const a = renderRecipe({ mixId: "m1", chainRevisionId: "c1", targetLufs: null });
    const b = renderRecipe({ mixId: "m1", chainRevisionId: "c2", targetLufs: null });
    expect(statusOf([mix("m1"), done("r1", "m1", a), send("r1"), approve("r1", a), done("r2", "m1", b)])).toBe("in_progress");
  });

  it("keeps the approval when the approved master is rendered again (same mix, chain revision and target: the print of an approved preview)", () => {
    const recipe = renderRecipe({ mixId: "m1", chainRevisionId: "c1", targetLufs: -14 });
    expect(recipe).not.toBe(renderRecipe({ mixId: "m1", chainRevisionId: "c1", targetLufs: null }));
    const events = [mix("m1"), done("r1", "m1", recipe), send("r1"), approve("r1", recipe), done("r2", "m1", recipe)];
    expect(deriveReviewState(events).state).toMatchObject({ status: "approved", approvedRenderId: "r1", approvedRecipe: recipe });
    // …until a render of something else, or a new mix.
    expect(statusOf([...events, done("r3", "m1", "other")])).toBe("in_progress");
    expect(statusOf([...events, mix("m2")])).toBe("in_progress");
  });

  it("clears the approval, and any review, when a new mix version arrives", () => {
    expect(statusOf([mix("m1"), done("r1"), send("r1"), approve("r1"), mix("m2")])).toBe("in_progress");
    expect(statusOf([mix("m1"), done("r1"), send("r1"), mix("m2")])).toBe("in_progress");
    expect(statusOf([mix("m1"), done("r1"), send("r1"), changes("r1"), mix("m2")])).toBe("in_progress");
  });

  it("allows a verdict only on the render under review", () => {
    const sent = deriveReviewState([mix("m1"), done("r1"), done("r2"), send("r1"), send("r2")]).state;
    expect(sent.underReviewRenderId).toBe("r2");
    expect(applyReviewEvent(sent, approve("r1"))).toEqual({ ok: false, reason: "A newer master was sent for review; listen to that one." });
    expect(applyReviewEvent(INITIAL_REVIEW_STATE, approve("r1"))).toMatchObject({ ok: false, reason: expect.stringMatching(/nothing is under review/) });
    expect(applyReviewEvent(sent, changes("r2", "   "))).toEqual({ ok: false, reason: "Say what should change." });
    const approved = applyReviewEvent(sent, approve("r2"));
    expect(approved.ok).toBe(true);
    if (approved.ok) expect(applyReviewEvent(approved.state, changes("r2"))).toMatchObject({ ok: false, reason: expect.stringMatching(/already approved/) });
  });

  it("keeps an approval that raced a new mix as ignored, with its reason, and sorts by time", () => {
    // Given out of order, as rows gathered from several tables would be: the approval came after the new mix.
    const base = Date.UTC(2026, 0, 1);
    const t = (s: number) => new Date(base + s * 1000);
    const events: ReviewEvent[] = [
      { kind: "approved", at: t(40), renderId: "r1", userId: "cli" },
      { kind: "mix_added", at: t(30), mixId: "m2" },
      { kind: "sent", at: t(20), renderId: "r1", userId: "eng", message: "First pass" },
      { kind: "render_done", at: t(10), renderId: "r1", mixId: "m1" },
      { kind: "mix_added", at: t(0), mixId: "m1" },
    ];
    const derived = deriveReviewState(events);
    expect(derived.state.status).toBe("in_progress");
    expect(derived.ignored).toHaveLength(1);
    expect(derived.ignored[0].event.kind).toBe("approved");
    // At the same instant, the work sorts before the verdict on it.
    const same = deriveReviewState([
      { kind: "approved", at: t(5), renderId: "r1", userId: "cli" },
      { kind: "sent", at: t(5), renderId: "r1", userId: "eng", message: null },
    ]);
    expect(same.state.status).toBe("approved");
  });
});

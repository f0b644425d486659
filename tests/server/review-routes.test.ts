// The review pages in the browser's terms: the render page's "send for review",
// the release page's list of what was sent and each track's review state, the
// client's review page (comments at a time, asking for changes), the
// dashboard's open reviews, the owner's outbox, and the e-mailed invitation.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { createInvitation } from "../../app/models/invitation.server.ts";
import * as renderPage from "../../app/routes/render.tsx";
import * as releasePage from "../../app/routes/release.tsx";
import * as reviewPage from "../../app/routes/review-room.tsx";
import * as dashboard from "../../app/routes/dashboard.tsx";
import * as outbox from "../../app/routes/outbox.tsx";
import * as workspace from "../../app/routes/workspace.tsx";
import { addStoredRender, type StoredRender } from "./download-fixture.ts";
import { createFixture, dataOf, destroyFixture, outcomeOf, requestAs, type Fixture, type Persona } from "./fixtures.ts";

let f: Fixture;
let stored: StoredRender;
const savedEnv = { url: process.env.TIDEMARK_PUBLIC_URL, fake: process.env.FAKE_SMTP_API };

const call = (handler: unknown, persona: Persona, path: string, params: Record<string, string>, form?: Record<string, string>) =>
  (handler as (a: unknown) => Promise<unknown>)({ request: requestAs(f, persona, path, form ? { form } : {}), params, context: {} });
const trk = () => ({ releaseId: f.releaseId, trackId: f.trackId });
const reviewPath = () => `/releases/${f.releaseId}/room?track=${f.trackId}`;
const mail = (to: string) => db("outbox_emails").where({ to_address: to }).orderBy("created_at", "desc").select("kind", "subject", "text");

beforeAll(async () => {
  process.env.TIDEMARK_PUBLIC_URL = "http://review.example.test:3999";
  delete process.env.FAKE_SMTP_API;
  f = await createFixture();
  stored = await addStoredRender({ studioId: f.studioId, trackId: f.trackId });
});

afterAll(async () => {
  process.env.TIDEMARK_PUBLIC_URL = savedEnv.url;
  if (savedEnv.fake !== undefined) process.env.FAKE_SMTP_API = savedEnv.fake;
  await stored?.cleanup();
  if (f) await db("outbox_emails").whereIn("studio_id", [f.studioId, f.otherStudioId]).delete();
  await destroyFixture(f);
});

describe("review in the browser", () => {
  it("the client sees nothing to review before anything is sent", async () => {
    const page = (await call(reviewPage.loader, "client", reviewPath(), trk())) as Awaited<ReturnType<typeof reviewPage.loader>>;
    expect(page.tracks).toEqual([]);
    expect(page.selected).toBeNull();
  });

  it("an engineer sends a finished render from its page; the client is e-mailed a link to the review room", async () => {
    const params = { ...trk(), renderId: stored.renderId };
    const path = `/releases/${f.releaseId}/tracks/${f.trackId}/renders/${stored.renderId}`;
    expect(await outcomeOf(() => call(renderPage.action, "client", path, params, { intent: "send", message: "x" }))).toBe("404");
    const result = await call(renderPage.action, "engineer", path, params, { intent: "send", message: "Warmer low end, as we said." });
    expect(result).toEqual({ sent: true });
    const [message] = await mail(f.users.client.email);
    expect(message?.kind).toBe("review_request");
    expect(message?.text).toContain(`http://review.example.test:3999/releases/${f.releaseId}/room?track=${f.trackId}&render=${stored.renderId}`);
    expect(message?.text).toContain("Warmer low end");
    // Sending it again (a reminder) is a second entry without a message.
    expect(await call(renderPage.action, "engineer", path, params, { intent: "send" })).toEqual({ sent: true });
    expect(await mail(f.users.client.email)).toHaveLength(2);
  });

  it("the release page lists what was sent, newest first, and the track's review state", async () => {
    const page = (await call(releasePage.loader, "client", `/releases/${f.releaseId}`, { releaseId: f.releaseId })) as Awaited<ReturnType<typeof releasePage.loader>>;
    expect(page.reviews[f.trackId]).toBe("sent");
    expect(page.sent.map((s) => s.message)).toEqual([null, "Warmer low end, as we said."]);
    expect(page.sent[1]).toMatchObject({ renderId: stored.renderId, trackId: f.trackId, senderName: `engineer ${f.tag}` });
  });

  it("the client comments at a time on the review page and asks for changes; the engineer is told", async () => {
    const form = { intent: "comment", renderId: stored.renderId, time: "0:00.01", body: "The snare jumps out here." };
    const posted = await call(reviewPage.action, "client", reviewPath(), trk(), form).catch((r) => r);
    expect(posted).toBeInstanceOf(Response);
    expect((posted as Response).status).toBe(302);
    let page = (await call(reviewPage.loader, "client", reviewPath(), trk())) as Awaited<ReturnType<typeof reviewPage.loader>>;
    expect(page.selected?.current.renderId).toBe(stored.renderId);
    expect(page.selected?.comments.map((c) => [c.timeS, c.body])).toEqual([[0.01, "The snare jumps out here."]]);
    // A time that is not one is refused beside the form (the fixture's mix lasts 1 000 frames, hence the tiny time above).
    expect(dataOf(await call(reviewPage.action, "client", reviewPath(), trk(), { ...form, time: "soon" })).status).toBe(400);

    await call(reviewPage.action, "client", reviewPath(), trk(), { intent: "changes", renderId: stored.renderId, note: "Less limiting in the chorus." }).catch((r) => r);
    page = (await call(reviewPage.loader, "client", reviewPath(), trk())) as Awaited<ReturnType<typeof reviewPage.loader>>;
    expect(page.selected?.review.status).toBe("changes_asked");
    expect(page.selected?.review.changesNote).toBe("Less limiting in the chorus.");
    const kinds = (await mail(f.users.engineer.email)).map((m) => m.kind);
    expect(kinds).toContain("review_changes");
    expect(kinds).toContain("comment");
  });

  it("the dashboard lists the track whose review waits, with its state", async () => {
    const page = (await call(dashboard.loader, "engineer", "/", {})) as Awaited<ReturnType<typeof dashboard.loader>>;
    expect(page.reviews.find((r) => r.trackId === f.trackId)?.status).toBe("changes_asked");
    const other = (await call(dashboard.loader, "otherStudio", "/", {})) as Awaited<ReturnType<typeof dashboard.loader>>;
    expect(other.reviews.some((r) => r.trackId === f.trackId)).toBe(false);
  });

  it("the outbox page shows the owner the studio's rows, an engineer nothing; no fake section without FAKE_SMTP_API", async () => {
    const page = (await call(outbox.loader, "owner", "/outbox", {})) as Awaited<ReturnType<typeof outbox.loader>>;
    expect(page.fake).toBeNull();
    expect(page.rows.map((r) => r.kind).sort()).toEqual(["comment", "review_changes", "review_request", "review_request"]);
    expect(page.rows.every((r) => r.to.endsWith("@fixture.test"))).toBe(true);
    expect(await outcomeOf(() => call(outbox.loader, "engineer", "/outbox", {}))).toBe("404");
  });

  it("the main navigation links the outbox for the owner only where the fake SMTP server is in use", async () => {
    const nav = async (persona: Persona) => ((await call(workspace.loader, persona, "/", {})) as Awaited<ReturnType<typeof workspace.loader>>).showOutbox;
    expect(await nav("owner")).toBe(false);
    process.env.FAKE_SMTP_API = "http://127.0.0.1:9";
    try {
      expect(await nav("owner")).toBe(true);
      expect(await nav("engineer")).toBe(false);
      expect(await nav("client")).toBe(false);
    } finally {
      delete process.env.FAKE_SMTP_API;
    }
  });

  it("an invitation is e-mailed with its link when a public address is given", async () => {
    const email = `invitee-${f.tag}@fixture.test`;
    const { token, emailId } = await createInvitation({ studioId: f.studioId, invitedBy: f.users.owner.id, email, role: "engineer", clientId: null, publicUrl: "http://review.example.test:3999/" });
    expect(emailId).not.toBeNull();
    const [message] = await mail(email);
    expect(message?.kind).toBe("invitation");
    // Stored with a placeholder where the token goes (it is put in when sent; tests/server/invitations.test.ts).
    expect(message?.text).toContain("http://review.example.test:3999/invitations/[[tidemark-secret]]");
    expect(message?.text).not.toContain(token);
    const silent = await createInvitation({ studioId: f.studioId, invitedBy: f.users.owner.id, email: `quiet-${f.tag}@fixture.test`, role: "engineer", clientId: null });
    expect(silent.emailId).toBeNull();
  });
});

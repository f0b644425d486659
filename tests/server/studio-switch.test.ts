// Someone in two studios: the header lists both, switching changes what the
// workspace shows, and a link into the other studio's release switches on the way.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { cookieFor, createFixture, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { listMemberships } from "../../app/models/user.server.ts";
import { getUser, requireReleaseAccess } from "../../app/lib/auth.server.ts";
import * as studioSwitch from "../../app/routes/studio-switch.ts";
import * as workspace from "../../app/routes/workspace.tsx";

let fixture: Fixture;
let elsewhereReleaseId: string;

beforeAll(async () => {
  fixture = await createFixture();
  // The first studio's engineer also works for the second studio.
  await db("memberships").insert({ user_id: fixture.users.engineer.id, studio_id: fixture.otherStudioId, role: "engineer" });
  const release = await db("releases").where({ studio_id: fixture.otherStudioId }).first<{ id: string }>("id");
  elsewhereReleaseId = release.id;
});
afterAll(() => destroyFixture(fixture));

type Args = Parameters<typeof studioSwitch.action>[0];
const call = <T>(handler: (args: Args) => T, request: Request) => handler({ request, params: {}, context: {} } as unknown as Args);

/** The session lives on the server: a switch changes the row the same cookie names. */
const withCookie = (cookie: string, path: string, form?: Record<string, string>) =>
  new Request(`http://tidemark.test${path}`, {
    method: form ? "POST" : "GET",
    headers: { Cookie: cookie, ...(form ? { "Content-Type": "application/x-www-form-urlencoded" } : {}) },
    body: form ? new URLSearchParams(form) : undefined,
  });

describe("several studios", () => {
  it("lists every membership, the sign-in default first", async () => {
    const memberships = await listMemberships(fixture.users.engineer.id);
    expect(memberships.map((m) => m.studioId)).toEqual([fixture.studioId, fixture.otherStudioId]);
    const single = await listMemberships(fixture.users.owner.id);
    expect(single).toHaveLength(1);
  });

  it("offers the chooser only to someone with more than one studio", async () => {
    const both = (await call(workspace.loader as never, requestAs(fixture, "engineer", "/"))) as { studios: unknown[] };
    expect(both.studios).toHaveLength(2);
    const one = (await call(workspace.loader as never, requestAs(fixture, "owner", "/"))) as { studios: unknown[] };
    expect(one.studios).toEqual([]);
  });

  it("switches the session to a studio the person belongs to", async () => {
    const cookie = await cookieFor(fixture.users.engineer.id, fixture.studioId);
    const response = (await call(studioSwitch.action, withCookie(cookie, "/studio", { studioId: fixture.otherStudioId }))) as Response;
    expect(response.status).toBe(302);
    expect(response.headers.get("Location")).toBe("/");
    const user = await getUser(withCookie(cookie, "/"));
    expect(user?.studioId).toBe(fixture.otherStudioId);
  });

  it("refuses a studio the person does not belong to, and a malformed id", async () => {
    const foreign = await call(studioSwitch.action, requestAs(fixture, "owner", "/studio", { form: { studioId: fixture.otherStudioId } })).catch((e: unknown) => e);
    expect((foreign as Response).status).toBe(404);
    const malformed = await call(studioSwitch.action, requestAs(fixture, "engineer", "/studio", { form: { studioId: "not-an-id" } })).catch((e: unknown) => e);
    expect((malformed as Response).status).toBe(400);
  });

  it("follows a link into the other studio's release by switching, and only for a member", async () => {
    const path = `/releases/${elsewhereReleaseId}`;
    const cookie = await cookieFor(fixture.users.engineer.id, fixture.studioId);
    const followed = await requireReleaseAccess(withCookie(cookie, path), elsewhereReleaseId).catch((e: unknown) => e);
    expect((followed as Response).status).toBe(302);
    expect((followed as Response).headers.get("Location")).toBe(path);
    const switched = withCookie(cookie, path);
    const { release } = await requireReleaseAccess(switched, elsewhereReleaseId);
    expect(release.id).toBe(elsewhereReleaseId);
    // The owner has no membership there: a plain 404, no switch.
    const refused = await requireReleaseAccess(requestAs(fixture, "owner", path), elsewhereReleaseId).catch((e: unknown) => e);
    expect((refused as Response).status).toBe(404);
  });
});

// Server-side sessions end when they should: signing out, a password change
// (every other session of the user), the owner removing a member (their
// sessions and API tokens at once), the owner revoking a member's tokens,
// and inactivity.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { getUser } from "../../app/lib/auth.server.ts";
import { hashSessionId, readSession, sessionCookie, startSession } from "../../app/lib/session.server.ts";
import { createApiToken, findTokenOwner } from "../../app/models/api-token.server.ts";
import * as signOut from "../../app/routes/sign-out.tsx";
import * as settings from "../../app/routes/settings.tsx";
import * as team from "../../app/routes/team.tsx";
import { cookieFor, createFixture, dataOf, destroyFixture, FIXTURE_PASSWORD, requestAs, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => {
  await destroyFixture(fixture);
});

const withCookie = (cookie: string, path = "/", form?: Record<string, string>) =>
  new Request(`http://tidemark.test${path}`, {
    method: form ? "POST" : "GET",
    headers: { Cookie: cookie, ...(form ? { "Content-Type": "application/x-www-form-urlencoded" } : {}) },
    body: form ? new URLSearchParams(form) : undefined,
  });
const signedInAs = async (cookie: string) => (await getUser(withCookie(cookie)))?.id;

describe("sessions", () => {
  it("keeps only a random id in the cookie, and a tampered cookie is nobody", async () => {
    const cookie = await cookieFor(fixture.users.engineer.id, fixture.studioId);
    expect(cookie).not.toContain(fixture.users.engineer.id);
    expect(decodeURIComponent(cookie)).not.toContain(fixture.studioId);
    expect(await signedInAs(cookie)).toBe(fixture.users.engineer.id);
    const [name, value] = cookie.split("=");
    expect(await signedInAs(`${name}=${value.slice(0, -2)}xx`)).toBeUndefined();
  });

  it("ends the session on sign-out: the same cookie no longer works", async () => {
    const cookie = await cookieFor(fixture.users.engineer.id, fixture.studioId);
    const other = await cookieFor(fixture.users.engineer.id, fixture.studioId);
    const response = (await signOut.action({ request: withCookie(cookie, "/sign-out", {}), params: {}, context: {} } as never)) as Response;
    expect(response.headers.get("Location")).toBe("/sign-in");
    expect(response.headers.get("Set-Cookie")).toMatch(/Max-Age=0|Expires=Thu, 01 Jan 1970/);
    expect(await signedInAs(cookie)).toBeUndefined();
    // Another browser of the same user stays signed in.
    expect(await signedInAs(other)).toBe(fixture.users.engineer.id);
  });

  it("ends every other session of the user on a password change, and keeps this one", async () => {
    const user = fixture.users.client;
    const here = await cookieFor(user.id, fixture.studioId);
    const elsewhere = await cookieFor(user.id, fixture.studioId);
    const wrong = dataOf<{ errors: Record<string, string> }>(
      await settings.action({ request: withCookie(here, "/settings", { intent: "password", current: "not-it", password: "a-new-password-2", confirm: "a-new-password-2" }), params: {}, context: {} } as never),
    );
    expect(wrong.status).toBe(400);
    expect(wrong.body.errors.current).toBeDefined();
    expect(await signedInAs(elsewhere)).toBe(user.id);
    const changed = await settings.action({
      request: withCookie(here, "/settings", { intent: "password", current: FIXTURE_PASSWORD, password: "a-new-password-2", confirm: "a-new-password-2" }),
      params: {},
      context: {},
    } as never);
    expect(changed).toMatchObject({ saved: true });
    expect(await signedInAs(here)).toBe(user.id);
    expect(await signedInAs(elsewhere)).toBeUndefined();
  });

  it("ends a removed member's sessions and API tokens at once; the owner revokes a member's tokens", async () => {
    const engineer = fixture.users.engineer;
    const cookie = await cookieFor(engineer.id, fixture.studioId);
    const { token } = await createApiToken({ userId: engineer.id, studioId: fixture.studioId, name: "script" });
    const membership = await db("memberships").first("id").where({ user_id: engineer.id, studio_id: fixture.studioId });

    // Revoking tokens: the token stops, the session stays.
    const revoked = dataOf<{ message: string }>(await team.action({ request: requestAs(fixture, "owner", "/team", { form: { intent: "revoke-tokens", membershipId: membership.id } }), params: {}, context: {} } as never));
    expect(revoked.body.message).toBe("1 API token revoked.");
    expect(await findTokenOwner(token)).toBeUndefined();
    expect(await signedInAs(cookie)).toBe(engineer.id);
    // Only the owner may.
    const byEngineer = await team.action({ request: requestAs(fixture, "engineer", "/team", { form: { intent: "revoke-tokens", membershipId: membership.id } }), params: {}, context: {} } as never).catch((e: unknown) => e);
    expect((byEngineer as Response).status).toBe(404);

    const { token: second } = await createApiToken({ userId: engineer.id, studioId: fixture.studioId, name: "another" });
    expect(await findTokenOwner(second)).toBeDefined();
    const removed = dataOf<{ message: string }>(await team.action({ request: requestAs(fixture, "owner", "/team", { form: { intent: "remove", membershipId: membership.id } }), params: {}, context: {} } as never));
    expect(removed.status).toBe(200);
    expect(await db("sessions").where({ user_id: engineer.id, studio_id: fixture.studioId }).first()).toBeUndefined();
    expect(await signedInAs(cookie)).toBeUndefined();
    expect(await findTokenOwner(second)).toBeUndefined();
    expect(await db("memberships").first().where({ id: membership.id })).toBeUndefined();

    // The owner cannot remove themselves.
    const ownerMembership = await db("memberships").first("id").where({ user_id: fixture.users.owner.id, studio_id: fixture.studioId });
    const self = dataOf<{ message: string }>(await team.action({ request: requestAs(fixture, "owner", "/team", { form: { intent: "remove", membershipId: ownerMembership.id } }), params: {}, context: {} } as never));
    expect(self.status).toBe(400);
  });

  it("expires after a period of inactivity, and each use moves the end forward", async () => {
    const setCookie = await startSession(fixture.users.owner.id, fixture.studioId);
    const cookie = setCookie.split(";")[0];
    const row = { id_hash: (await readSession(cookie))?.idHash as string };
    expect(row.id_hash).toMatch(/^[0-9a-f]{64}$/);
    // The table holds a hash of the id, never the id itself.
    const id = (await sessionCookie.parse(cookie)) as string;
    expect(hashSessionId(id)).toBe(row.id_hash);
    expect(await db("sessions").first().where({ id_hash: id })).toBeUndefined();
    // Seen two minutes ago: a use moves last_seen and the end forward.
    await db("sessions").where({ id_hash: row.id_hash }).update({ last_seen_at: db.raw(`now() - interval '2 minutes'`), expires_at: db.raw(`now() + interval '1 hour'`) });
    await readSession(cookie);
    const touched = await db("sessions").first().where({ id_hash: row.id_hash });
    expect(touched.expires_at.getTime()).toBeGreaterThan(Date.now() + 2 * 3600_000);
    // Idle past the end: gone.
    await db("sessions").where({ id_hash: row.id_hash }).update({ expires_at: db.raw(`now() - interval '1 second'`) });
    expect(await signedInAs(cookie)).toBeUndefined();
  });
});

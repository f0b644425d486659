// Sign-in: one message for a wrong password and an unknown e-mail, and the
// slow-down after repeated failures (10 a minute per e-mail, and per address).
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { sessionStorage } from "../../app/lib/session.server.ts";
import { TOO_MANY_ATTEMPTS, WRONG_CREDENTIALS } from "../../app/lib/auth.server.ts";
import { isSignInThrottled, recordFailedSignIn, SIGN_IN_LIMIT } from "../../app/models/sign-in-attempt.server.ts";
import * as signIn from "../../app/routes/sign-in.tsx";
import { createFixture, dataOf, destroyFixture, FIXTURE_PASSWORD, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => {
  await db("sign_in_attempts").whereLike("email", `%${fixture.tag}%`).delete();
  await destroyFixture(fixture);
});

async function attempt(email: string, password: string) {
  const request = new Request("http://tidemark.test/sign-in", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email, password, redirectTo: "/releases" }),
  });
  return signIn.action({ request, params: {}, context: {} } as never);
}

describe("sign-in", () => {
  it("signs in with the right password, whatever the e-mail's case, and goes where it was asked", async () => {
    const result = await attempt(fixture.users.engineer.email.toUpperCase(), FIXTURE_PASSWORD);
    expect(result).toBeInstanceOf(Response);
    const response = result as Response;
    expect(response.headers.get("Location")).toBe("/releases");
    const cookie = response.headers.get("Set-Cookie") ?? "";
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Lax/);
    const session = await sessionStorage.getSession(cookie);
    expect(session.get("userId")).toBe(fixture.users.engineer.id);
  });

  it("gives the same answer for a wrong password and an unknown e-mail", async () => {
    const wrong = dataOf<{ message: string }>(await attempt(fixture.users.owner.email, "not-the-password"));
    const unknown = dataOf<{ message: string }>(await attempt(`nobody-${fixture.tag}@fixture.test`, "not-the-password"));
    expect(wrong).toEqual({ status: 401, body: expect.objectContaining({ message: WRONG_CREDENTIALS }) });
    expect(unknown).toEqual({ status: 401, body: expect.objectContaining({ message: WRONG_CREDENTIALS }) });
  });

  it("slows down after ten failures a minute for one e-mail, even with the right password, then lets it through", async () => {
    const email = fixture.users.client.email;
    for (let i = 0; i < SIGN_IN_LIMIT; i += 1) {
      expect(dataOf(await attempt(email, `wrong-${i}`)).status).toBe(401);
    }
    const blocked = dataOf<{ message: string }>(await attempt(email, FIXTURE_PASSWORD));
    expect(blocked.status).toBe(429);
    expect(blocked.body.message).toBe(TOO_MANY_ATTEMPTS);
    // Another e-mail is not affected.
    expect(await attempt(fixture.users.owner.email, FIXTURE_PASSWORD)).toBeInstanceOf(Response);
    // Once the failures are older than the window, the right password works again.
    await db("sign_in_attempts").where({ email }).update({ created_at: db.raw(`now() - interval '61 seconds'`) });
    expect(await attempt(email, FIXTURE_PASSWORD)).toBeInstanceOf(Response);
  });

  it("counts failures per address across e-mails", async () => {
    const address = `203.0.113.${Math.floor(Math.random() * 250)}-${fixture.tag}`;
    for (let i = 0; i < SIGN_IN_LIMIT; i += 1) await recordFailedSignIn(`spray-${i}-${fixture.tag}@fixture.test`, address);
    expect(await isSignInThrottled(`fresh-${fixture.tag}@fixture.test`, address)).toBe(true);
    expect(await isSignInThrottled(`fresh-${fixture.tag}@fixture.test`, null)).toBe(false);
    await db("sign_in_attempts").where({ address }).delete();
  });
});

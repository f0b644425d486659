// Sign-in: one message for a wrong password and an unknown e-mail, and the
// slow-down after repeated failures (10 a minute per e-mail from one address,
// 40 a minute per address), which never locks the account for other addresses.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { db } from "../../app/lib/db.server.ts";
import { readSession } from "../../app/lib/session.server.ts";
import { TOO_MANY_ATTEMPTS, WRONG_CREDENTIALS } from "../../app/lib/auth.server.ts";
import { PEER_HEADER } from "../../app/lib/client-address.server.ts";
import { admitSignInAttempt, SIGN_IN_ADDRESS_LIMIT, SIGN_IN_LIMIT } from "../../app/models/sign-in-attempt.server.ts";
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

async function attempt(email: string, password: string, address = `192.0.2.1-${fixture.tag}`, redirectTo = "/releases") {
  const request = new Request("http://tidemark.test/sign-in", {
    method: "POST",
    headers: { "Content-Type": "application/x-www-form-urlencoded", [PEER_HEADER]: address },
    body: new URLSearchParams({ email, password, redirectTo }),
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
    const session = await readSession(cookie.split(";")[0]);
    expect(session?.userId).toBe(fixture.users.engineer.id);
    // Each sign-in is a new session with its own random id.
    const again = ((await attempt(fixture.users.engineer.email, FIXTURE_PASSWORD)) as Response).headers.get("Set-Cookie") ?? "";
    expect(again.split(";")[0]).not.toBe(cookie.split(";")[0]);
  });

  it("gives the same answer for a wrong password and an unknown e-mail", async () => {
    const wrong = dataOf<{ message: string }>(await attempt(fixture.users.owner.email, "not-the-password"));
    const unknown = dataOf<{ message: string }>(await attempt(`nobody-${fixture.tag}@fixture.test`, "not-the-password"));
    expect(wrong).toEqual({ status: 401, body: expect.objectContaining({ message: WRONG_CREDENTIALS }) });
    expect(unknown).toEqual({ status: 401, body: expect.objectContaining({ message: WRONG_CREDENTIALS }) });
  });

  it("slows down after ten failures a minute for one e-mail from one address, even with the right password, then lets it through", async () => {
    const email = fixture.users.client.email;
    const flood = `198.51.100.7-${fixture.tag}`;
    for (let i = 0; i < SIGN_IN_LIMIT; i += 1) {
      expect(dataOf(await attempt(email, `wrong-${i}`, flood)).status).toBe(401);
    }
    const blocked = dataOf<{ message: string }>(await attempt(email, FIXTURE_PASSWORD, flood));
    expect(blocked.status).toBe(429);
    expect(blocked.body.message).toBe(TOO_MANY_ATTEMPTS);
    // The right password from an address that has not failed still works during the flood.
    expect(await attempt(email, FIXTURE_PASSWORD, `203.0.113.9-${fixture.tag}`)).toBeInstanceOf(Response);
    expect(dataOf(await attempt(email, "wrong-again", flood)).status).toBe(429);
    // Another e-mail is not affected.
    expect(await attempt(fixture.users.owner.email, FIXTURE_PASSWORD, flood)).toBeInstanceOf(Response);
    // Once the failures are older than the window, the right password works from there again.
    await db("sign_in_attempts").where({ email }).update({ created_at: db.raw(`now() - interval '61 seconds'`) });
    expect(await attempt(email, FIXTURE_PASSWORD, flood)).toBeInstanceOf(Response);
  });

  it("counts tries per address across e-mails, and concurrent tries cannot all slip under the limit", async () => {
    const address = `203.0.113.${Math.floor(Math.random() * 250)}-${fixture.tag}`;
    const admitted = await Promise.all(
      Array.from({ length: SIGN_IN_ADDRESS_LIMIT + 20 }, (_, i) => admitSignInAttempt(`spray-${i}-${fixture.tag}@fixture.test`, address)),
    );
    expect(admitted.filter(Boolean).length).toBeLessThanOrEqual(SIGN_IN_ADDRESS_LIMIT);
    expect(await admitSignInAttempt(`fresh-${fixture.tag}@fixture.test`, address)).toBe(false);
    expect(await admitSignInAttempt(`fresh-${fixture.tag}@fixture.test`, `elsewhere-${fixture.tag}`)).toBe(true);
    const pair = await Promise.all(Array.from({ length: 30 }, () => admitSignInAttempt(`pair-${fixture.tag}@fixture.test`, `pair-${fixture.tag}`)));
    expect(pair.filter(Boolean).length).toBeLessThanOrEqual(SIGN_IN_LIMIT);
    await db("sign_in_attempts").whereLike("address", `%${fixture.tag}`).delete();
  });

  it("sends the browser only to a path on our own origin after sign-in", async () => {
    const to = async (redirectTo: string) => ((await attempt(fixture.users.engineer.email, FIXTURE_PASSWORD, undefined, redirectTo)) as Response).headers.get("Location");
    expect(await to("/releases?x=1#top")).toBe("/releases?x=1#top");
    // Tab and other control characters are stripped by browsers ("/\t/x" would become "//x"); a backslash reads as a slash.
    for (const evil of ["/\t/evil.example", "/\n/evil.example", "//evil.example", "/\\evil.example", "https://evil.example/", "/\u0000/evil.example"]) {
      expect(await to(evil), JSON.stringify(evil)).toBe("/");
    }
    // An encoded tab stays encoded: a path on our origin, harmless.
    expect(new URL((await to("/%09/evil.example")) ?? "", "http://tidemark.test").host).toBe("tidemark.test");
    expect(await to("/\tevil")).toBe("/");
    expect(await to("/\x7f/x")).toBe("/");
  });
});

// A member who sends too many API requests, with a token or the session
// cookie (one bucket for both), gets a 429 with Retry-After and the JSON
// error shape; another member is unaffected.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { cookieFor, createFixture, destroyFixture, type Fixture } from "./fixtures.ts";
import { createApiToken } from "../../app/models/api-token.server.ts";
import { apiRateLimiter } from "../../app/lib/api.server.ts";
import * as apiReleases from "../../app/routes/api.releases.ts";

let f: Fixture;
beforeAll(async () => {
  f = await createFixture();
});
afterAll(() => destroyFixture(f));

const get = (token: string) =>
  apiReleases.loader({ request: new Request("http://tidemark.test/api/releases", { headers: { Authorization: `Bearer ${token}` } }), params: {}, context: {} } as never) as Promise<Response>;

describe("API rate limit", () => {
  it("answers 429 once a member's bucket is empty, and not for another member", async () => {
    const { token } = await createApiToken({ userId: f.users.engineer.id, studioId: f.studioId, name: "Busy script" });
    const { token: ownerToken } = await createApiToken({ userId: f.users.owner.id, studioId: f.studioId, name: "Quiet script" });
    expect((await get(token)).status).toBe(200);
    // Drain the rest of the engineer's bucket without a thousand HTTP calls.
    const key = `${f.users.engineer.id}:${f.studioId}`;
    while (apiRateLimiter.take(key).ok);
    const refused = await get(token);
    expect(refused.status).toBe(429);
    expect(Number(refused.headers.get("Retry-After"))).toBeGreaterThanOrEqual(1);
    expect(await refused.json()).toMatchObject({ error: expect.stringContaining("Too many API requests") });
    expect((await get(ownerToken)).status).toBe(200);
    // The same member with the session cookie draws from the same bucket.
    const cookie = await cookieFor(f.users.engineer.id, f.studioId);
    while (apiRateLimiter.take(key).ok);
    const byCookie = (await apiReleases.loader({ request: new Request("http://tidemark.test/api/releases", { headers: { Cookie: cookie } }), params: {}, context: {} } as never)) as Response;
    expect(byCookie.status).toBe(429);
  });

  it("limits calls with the session cookie alone", async () => {
    const cookie = await cookieFor(f.users.client.id, f.studioId);
    const call = () => apiReleases.loader({ request: new Request("http://tidemark.test/api/releases", { headers: { Cookie: cookie } }), params: {}, context: {} } as never) as Promise<Response>;
    expect((await call()).status).toBe(200);
    while (apiRateLimiter.take(`${f.users.client.id}:${f.studioId}`).ok);
    expect((await call()).status).toBe(429);
  });
});

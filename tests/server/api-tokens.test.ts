// The API tokens page: a token is shown once at creation, listed by name
// with its last use, stored only as a SHA-256, and revoked by its owner only.
import { createHash } from "node:crypto";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { createFixture, dataOf, destroyFixture, requestAs, type Fixture } from "./fixtures.ts";
import { db } from "../../app/lib/db.server.ts";
import { findTokenOwner } from "../../app/models/api-token.server.ts";
import * as tokensPage from "../../app/routes/settings-tokens.tsx";

let f: Fixture;
beforeAll(async () => {
  f = await createFixture();
});
afterAll(async () => destroyFixture(f));

const call = (handler: unknown, request: Request) =>
  (handler as (a: { request: Request; params: Record<string, string>; context: unknown }) => Promise<unknown>)({ request, params: {}, context: {} });

type Result = { errors: Record<string, string>; token?: string; values: Record<string, string>; revoked?: boolean };
type Page = { tokens: { id: string; name: string; lastUsedAt: string | null }[] };

describe("API tokens page", () => {
  let token: string;

  it("asks for a name and keeps what was typed", async () => {
    const result = dataOf<Result>(await call(tokensPage.action, requestAs(f, "engineer", "/settings/tokens", { form: { intent: "create", name: "   " } })));
    expect(result.status).toBe(400);
    expect(result.body.errors.name).toBeTruthy();
    const long = "x".repeat(81);
    const tooLong = dataOf<Result>(await call(tokensPage.action, requestAs(f, "engineer", "/settings/tokens", { form: { intent: "create", name: long } })));
    expect(tooLong.body.values.name).toBe(long);
  });

  it("shows a new token once and stores only its SHA-256", async () => {
    const result = dataOf<Result>(await call(tokensPage.action, requestAs(f, "engineer", "/settings/tokens", { form: { intent: "create", name: "Delivery script" } })));
    expect(result.status).toBe(200);
    token = result.body.token!;
    expect(token).toMatch(/^tdm_[A-Za-z0-9_-]{43}$/);
    const row = await db("api_tokens").where({ user_id: f.users.engineer.id }).first("token_hash", "name");
    expect(row).toEqual({ name: "Delivery script", token_hash: createHash("sha256").update(token).digest("hex") });
    const page = (await call(tokensPage.loader, requestAs(f, "engineer", "/settings/tokens"))) as Page;
    expect(page.tokens.map((t) => t.name)).toEqual(["Delivery script"]);
    expect(JSON.stringify(page)).not.toContain(token);
    expect(page.tokens[0].lastUsedAt).toBeNull();
  });

  it("notes the last use", async () => {
    expect(await findTokenOwner(token)).toEqual({ userId: f.users.engineer.id, studioId: f.studioId });
    const page = (await call(tokensPage.loader, requestAs(f, "engineer", "/settings/tokens"))) as Page;
    expect(page.tokens[0].lastUsedAt).not.toBeNull();
  });

  it("lists only the member's own tokens; another member cannot revoke them", async () => {
    const owners = (await call(tokensPage.loader, requestAs(f, "owner", "/settings/tokens"))) as Page;
    expect(owners.tokens).toEqual([]);
    const [{ id }] = ((await call(tokensPage.loader, requestAs(f, "engineer", "/settings/tokens"))) as Page).tokens;
    const attempt = dataOf<Result>(await call(tokensPage.action, requestAs(f, "owner", "/settings/tokens", { form: { intent: "revoke", tokenId: id } })));
    expect(attempt.status).toBe(400);
    expect(await findTokenOwner(token)).toBeDefined();
  });

  it("revokes a token: it stops working and leaves the list", async () => {
    const [{ id }] = ((await call(tokensPage.loader, requestAs(f, "engineer", "/settings/tokens"))) as Page).tokens;
    const result = dataOf<Result>(await call(tokensPage.action, requestAs(f, "engineer", "/settings/tokens", { form: { intent: "revoke", tokenId: id } })));
    expect(result.body.revoked).toBe(true);
    expect(await findTokenOwner(token)).toBeUndefined();
    expect(((await call(tokensPage.loader, requestAs(f, "engineer", "/settings/tokens"))) as Page).tokens).toEqual([]);
  });
});

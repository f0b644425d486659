// Personal API tokens. The token is 32 random bytes (base64url) after a
// "tdm_" prefix that makes a leaked one easy to recognise; only its SHA-256
// is stored, so the database never holds a usable token.
import { createHash, randomBytes } from "node:crypto";
import { db } from "../lib/db.server.ts";

export type ApiToken = { id: string; name: string; createdAt: Date; lastUsedAt: Date | null };

export const TOKEN_PREFIX = "tdm_";

export function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

/** Makes a token for the member; returns it once, in the clear. */
export async function createApiToken(input: { userId: string; studioId: string; name: string }): Promise<{ token: string; apiToken: ApiToken }> {
  const token = TOKEN_PREFIX + randomBytes(32).toString("base64url");
  const [row] = await db("api_tokens")
    .insert({ user_id: input.userId, studio_id: input.studioId, name: input.name.trim(), token_hash: hashToken(token) })
    .returning(["id", "name", "created_at", "last_used_at"]);
  return { token, apiToken: { id: row.id, name: row.name, createdAt: row.created_at, lastUsedAt: row.last_used_at } };
}

/** The member's tokens that still work, newest first. */
export async function listApiTokens(userId: string, studioId: string): Promise<ApiToken[]> {
  const rows = await db("api_tokens")
    .where({ user_id: userId, studio_id: studioId })
    .whereNull("revoked_at")
    .orderBy("created_at", "desc")
    .select("id", "name", "created_at", "last_used_at");
  return rows.map((row) => ({ id: row.id, name: row.name, createdAt: row.created_at, lastUsedAt: row.last_used_at }));
}

/** Revokes one of the member's own tokens; false when there is none by that id. */
export async function revokeApiToken(userId: string, studioId: string, tokenId: string): Promise<boolean> {
  if (!/^[0-9a-f-]{36}$/i.test(tokenId)) return false;
  const count = await db("api_tokens").where({ id: tokenId, user_id: userId, studio_id: studioId }).whereNull("revoked_at").update({ revoked_at: db.fn.now() });
  return count > 0;
}

/** Who a presented token belongs to (and notes its use), or undefined. */
export async function findTokenOwner(token: string): Promise<{ userId: string; studioId: string } | undefined> {
  if (!token.startsWith(TOKEN_PREFIX)) return undefined;
  const [row] = await db("api_tokens")
    .where({ token_hash: hashToken(token) })
    .whereNull("revoked_at")
    .update({ last_used_at: db.fn.now() })
    .returning(["user_id", "studio_id"]);
  return row ? { userId: row.user_id, studioId: row.studio_id } : undefined;
}

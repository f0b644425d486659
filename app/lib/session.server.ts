// Server-side sessions. The cookie carries only a random id (signed, so a
// tampered cookie is refused before the database is asked); the `sessions` row
// says who it is, in which studio, and until when. Signing out, a password
// change and a member's removal end sessions by deleting rows.
import { createHash, randomBytes } from "node:crypto";
import { createCookie } from "react-router";
import { db } from "./db.server.ts";
import { env } from "./env.server.ts";

export type SessionRecord = { idHash: string; userId: string; studioId: string; createdAt: Date; lastSeenAt: Date; expiresAt: Date };

export const sessionCookie = createCookie("__tidemark", {
  httpOnly: true,
  sameSite: "lax",
  secure: env.secureCookies,
  path: "/",
  secrets: [env.sessionSecret],
  // The browser may keep it as long as the longest session lasts; the row decides.
  maxAge: env.sessionMaxDays * 24 * 60 * 60,
});

// last_seen_at is written at most this often, so a busy page does not write on every request.
const TOUCH_EVERY_MS = 60_000;

export function hashSessionId(id: string): string {
  return createHash("sha256").update(id).digest("hex");
}

async function sessionIdOf(cookieHeader: string | null): Promise<string | null> {
  if (!cookieHeader) return null;
  const value: unknown = await sessionCookie.parse(cookieHeader);
  return typeof value === "string" && /^[A-Za-z0-9_-]{43}$/.test(value) ? value : null;
}

/** The session a Cookie header names, if it exists and has not expired; notes its use. */
export async function readSession(cookieHeader: string | null): Promise<SessionRecord | undefined> {
  const id = await sessionIdOf(cookieHeader);
  if (!id) return undefined;
  const idHash = hashSessionId(id);
  const row = await db("sessions").where({ id_hash: idHash }).andWhere("expires_at", ">", db.fn.now()).first();
  if (!row) return undefined;
  const record: SessionRecord = {
    idHash,
    userId: row.user_id,
    studioId: row.studio_id,
    createdAt: row.created_at,
    lastSeenAt: row.last_seen_at,
    expiresAt: row.expires_at,
  };
  if (Date.now() - record.lastSeenAt.getTime() >= TOUCH_EVERY_MS) {
    // Inactivity expiry: each use moves the end forward, never past the absolute limit.
    await db("sessions")
      .where({ id_hash: idHash })
      .update({
        last_seen_at: db.fn.now(),
        expires_at: db.raw(`least(created_at + make_interval(days => ?), now() + make_interval(hours => ?))`, [env.sessionMaxDays, env.sessionIdleHours]),
      });
  }
  return record;
}

/** Starts a session for the member; returns the Set-Cookie header that carries its id. */
export async function startSession(userId: string, studioId: string): Promise<string> {
  const id = randomBytes(32).toString("base64url");
  await db("sessions").insert({
    id_hash: hashSessionId(id),
    user_id: userId,
    studio_id: studioId,
    expires_at: db.raw(`now() + make_interval(hours => ?)`, [env.sessionIdleHours]),
  });
  // Expired rows serve no purpose; a sign-in is a rare enough moment to prune them.
  await db("sessions").where("expires_at", "<", db.fn.now()).delete();
  return sessionCookie.serialize(id);
}

/** Moves the session to another studio of the same user (the caller checked the membership). */
export async function setSessionStudio(idHash: string, studioId: string): Promise<void> {
  await db("sessions").where({ id_hash: idHash }).update({ studio_id: studioId });
}

/** Ends the session the Cookie header names; returns a Set-Cookie header that clears the cookie. */
export async function endSession(cookieHeader: string | null): Promise<string> {
  const id = await sessionIdOf(cookieHeader);
  if (id) await db("sessions").where({ id_hash: hashSessionId(id) }).delete();
  return sessionCookie.serialize("", { maxAge: 0, expires: new Date(0) });
}

/** Ends every session of a user (in one studio, or all), except the one kept; returns how many ended. */
export async function endSessionsOfUser(userId: string, options: { studioId?: string; exceptIdHash?: string } = {}): Promise<number> {
  const query = db("sessions").where({ user_id: userId });
  if (options.studioId) query.andWhere({ studio_id: options.studioId });
  if (options.exceptIdHash) query.andWhereNot({ id_hash: options.exceptIdHash });
  return query.delete();
}

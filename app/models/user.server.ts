// Users and the membership that gives them a role in a studio.
import { db } from "../lib/db.server.ts";
import type { Role } from "../lib/roles.ts";
import { hashPassword, verifyPassword } from "../lib/password.server.ts";
import { endSessionsOfUser } from "../lib/session.server.ts";

export type CurrentUser = {
  id: string;
  email: string;
  name: string;
  studioId: string;
  studioName: string;
  role: Role;
  clientId: string | null;
  clientName: string | null;
};

export function normalizeEmail(email: string): string {
  return email.trim().toLowerCase();
}

export async function findUserForSignIn(email: string) {
  const user = await db("users")
    .select("id", "password_hash")
    .whereRaw("lower(email) = ?", [normalizeEmail(email)])
    .first<{ id: string; password_hash: string } | undefined>();
  if (!user) return undefined;
  // The oldest membership; someone in several studios switches from the header.
  const membership = await db("memberships")
    .select("studio_id")
    .where({ user_id: user.id })
    .orderBy("created_at")
    .first<{ studio_id: string } | undefined>();
  return { id: user.id, passwordHash: user.password_hash, studioId: membership?.studio_id ?? null };
}

export async function getCurrentUser(userId: string, studioId: string): Promise<CurrentUser | undefined> {
  const row = await db("users as u")
    .join("memberships as m", "m.user_id", "u.id")
    .join("studios as s", "s.id", "m.studio_id")
    .leftJoin("clients as c", "c.id", "m.client_id")
    .where({ "u.id": userId, "m.studio_id": studioId })
    .first<
      | { id: string; email: string; name: string; studio_id: string; studio_name: string; role: Role; client_id: string | null; client_name: string | null }
      | undefined
    >("u.id", "u.email", "u.name", "m.studio_id", "s.name as studio_name", "m.role", "m.client_id", "c.name as client_name");
  if (!row) return undefined;
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    studioId: row.studio_id,
    studioName: row.studio_name,
    role: row.role,
    clientId: row.client_id,
    clientName: row.client_name,
  };
}

/**
 * Changes the password when the current one is right, and ends every other
 * session of the user (the one kept is the caller's own). False when the
 * current password is wrong.
 */
export async function changePassword(userId: string, current: string, next: string, keepSessionIdHash: string | undefined): Promise<boolean> {
  const row = await db("users").where({ id: userId }).first<{ password_hash: string } | undefined>("password_hash");
  if (!row || !(await verifyPassword(current, row.password_hash))) return false;
  const passwordHash = await hashPassword(next);
  await db("users").where({ id: userId }).update({ password_hash: passwordHash });
  await endSessionsOfUser(userId, { exceptIdHash: keepSessionIdHash });
  return true;
}

export async function updateUserName(userId: string, name: string): Promise<void> {
  await db("users").where({ id: userId }).update({ name });
}

export type MembershipChoice = { studioId: string; studioName: string; role: Role; clientName: string | null };

/** Every studio this user belongs to, oldest membership first (the sign-in default). */
export async function listMemberships(userId: string): Promise<MembershipChoice[]> {
  return db("memberships as m")
    .join("studios as s", "s.id", "m.studio_id")
    .leftJoin("clients as c", "c.id", "m.client_id")
    .where("m.user_id", userId)
    .orderBy("m.created_at")
    .select("m.studio_id as studioId", "s.name as studioName", "m.role", "c.name as clientName");
}

/** The studio a release belongs to, when this user is a member there (for links into another studio). */
export async function membershipStudioForRelease(userId: string, releaseId: string): Promise<string | undefined> {
  const row = await db("releases as r")
    .join("memberships as m", function () {
      this.on("m.studio_id", "r.studio_id").andOnVal("m.user_id", userId);
    })
    .where("r.id", releaseId)
    .first<{ studio_id: string } | undefined>("r.studio_id");
  return row?.studio_id;
}

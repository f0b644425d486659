// A studio's members and their roles.
import { db } from "../lib/db.server.ts";
import { isUuid } from "../lib/ids.ts";
import type { Role } from "../lib/roles.ts";

export type Member = { membershipId: string; userId: string; name: string; email: string; role: Role; clientName: string | null; liveTokens: number };

export async function listMembers(studioId: string): Promise<Member[]> {
  return db("memberships as m")
    .join("users as u", "u.id", "m.user_id")
    .leftJoin("clients as c", "c.id", "m.client_id")
    .select("m.id as membershipId", "u.id as userId", "u.name", "u.email", "m.role", "c.name as clientName")
    .select(
      db.raw(`(SELECT count(*)::int FROM api_tokens t WHERE t.user_id = m.user_id AND t.studio_id = m.studio_id AND t.revoked_at IS NULL) AS "liveTokens"`),
    )
    .where("m.studio_id", studioId)
    .orderByRaw(`array_position(ARRAY['owner','engineer','client']::text[], m.role), lower(u.name)`);
}

export type RoleChangeResult = { ok: true } | { ok: false; message: string };

/** Moves a staff member between owner and engineer; a studio always keeps one owner. */
export async function changeStaffRole(studioId: string, membershipId: string, role: "owner" | "engineer"): Promise<RoleChangeResult> {
  if (!isUuid(membershipId)) return { ok: false, message: "No such member" };
  return db.transaction(async (trx) => {
    // Lock the studio's staff rows so two owners demoting each other cannot leave none.
    const staff = await trx("memberships").select("id", "role").where({ studio_id: studioId }).whereIn("role", ["owner", "engineer"]).forUpdate();
    const member = staff.find((row) => row.id === membershipId);
    if (!member) return { ok: false, message: "Only staff roles can be changed here" };
    const owners = staff.filter((row) => row.role === "owner").length;
    if (member.role === "owner" && role !== "owner" && owners <= 1) {
      return { ok: false, message: "The studio needs at least one owner" };
    }
    await trx("memberships").where({ id: membershipId }).update({ role });
    return { ok: true };
  });
}

export type MemberEndResult = { ok: true; name: string } | { ok: false; message: string };

/**
 * Removes a member from the studio: the membership goes, and with it at once
 * every session of theirs in this studio and every API token they hold here.
 * An owner does not remove themselves, and a studio keeps an owner.
 */
export async function removeMember(studioId: string, membershipId: string, byUserId: string): Promise<MemberEndResult> {
  if (!isUuid(membershipId)) return { ok: false, message: "No such member" };
  return db.transaction(async (trx) => {
    const staff = await trx("memberships").select("id", "role").where({ studio_id: studioId }).whereIn("role", ["owner", "engineer"]).forUpdate();
    const member = await trx("memberships as m").join("users as u", "u.id", "m.user_id").where({ "m.id": membershipId, "m.studio_id": studioId }).first("m.user_id", "m.role", "u.name");
    if (!member) return { ok: false, message: "No such member" };
    if (member.user_id === byUserId) return { ok: false, message: "You cannot remove yourself" };
    if (member.role === "owner" && staff.filter((row) => row.role === "owner").length <= 1) return { ok: false, message: "The studio needs at least one owner" };
    await trx("memberships").where({ id: membershipId }).delete();
    await trx("sessions").where({ user_id: member.user_id, studio_id: studioId }).delete();
    await trx("api_tokens").where({ user_id: member.user_id, studio_id: studioId }).whereNull("revoked_at").update({ revoked_at: trx.fn.now() });
    return { ok: true, name: member.name as string };
  });
}

/** Revokes every live API token a member holds in the studio; the count revoked, or undefined for no such member. */
export async function revokeMemberTokens(studioId: string, membershipId: string): Promise<number | undefined> {
  if (!isUuid(membershipId)) return undefined;
  const member = await db("memberships").where({ id: membershipId, studio_id: studioId }).first<{ user_id: string } | undefined>("user_id");
  if (!member) return undefined;
  return db("api_tokens").where({ user_id: member.user_id, studio_id: studioId }).whereNull("revoked_at").update({ revoked_at: db.fn.now() });
}

// A studio's members and their roles.
import { db } from "../lib/db.server.ts";
import { isUuid } from "../lib/ids.ts";
import type { Role } from "../lib/roles.ts";

export type Member = { membershipId: string; userId: string; name: string; email: string; role: Role; clientName: string | null };

export async function listMembers(studioId: string): Promise<Member[]> {
  return db("memberships as m")
    .join("users as u", "u.id", "m.user_id")
    .leftJoin("clients as c", "c.id", "m.client_id")
    .select("m.id as membershipId", "u.id as userId", "u.name", "u.email", "m.role", "c.name as clientName")
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

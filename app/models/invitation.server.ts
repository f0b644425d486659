// Invitations: an owner invites an engineer or a client member by e-mail; the
// link carries a random token of which only a SHA-256 is stored.
import { createHash, randomBytes } from "node:crypto";
import { db } from "../lib/db.server.ts";
import { queueEmail, SECRET_PLACEHOLDER } from "../lib/mail/mailer.server.ts";
import { invitationEmail } from "../lib/mail/templates.server.ts";
import { hashPassword } from "../lib/password.server.ts";
import { normalizeEmail } from "./user.server.ts";
import { INVITATION_DAYS } from "../schemas/team.ts";

export { INVITATION_DAYS };

export type PendingInvitation = { id: string; email: string; role: "engineer" | "client"; clientName: string | null; expiresAt: string };
export type OpenInvitation = { id: string; studioId: string; studioName: string; email: string; role: "engineer" | "client"; clientId: string | null };

function hashToken(token: string): string {
  return createHash("sha256").update(token).digest("hex");
}

export async function createInvitation(input: {
  studioId: string;
  invitedBy: string;
  email: string;
  role: "engineer" | "client";
  clientId: string | null;
  /** The site's public address; when given, the invitation is also e-mailed (queued with the row). */
  publicUrl?: string;
}): Promise<{ token: string; emailId: string | null }> {
  const token = randomBytes(32).toString("base64url");
  return db.transaction(async (t) => {
    await t("invitations").insert({
      studio_id: input.studioId,
      invited_by: input.invitedBy,
      email: normalizeEmail(input.email),
      role: input.role,
      client_id: input.clientId,
      token_hash: hashToken(token),
      expires_at: t.raw(`now() + make_interval(days => ?)`, [INVITATION_DAYS]),
    });
    if (!input.publicUrl) return { token, emailId: null };
    const studio = await t("studios").where({ id: input.studioId }).first<{ name: string } | undefined>("name");
    const inviter = await t("users").where({ id: input.invitedBy }).first<{ name: string } | undefined>("name");
    const parts = invitationEmail({
      studioName: studio?.name ?? "Your studio",
      inviterName: inviter?.name ?? "The studio",
      role: input.role,
      // The stored body holds a placeholder; the token goes sealed beside it until sent.
      link: invitationLink(input.publicUrl, SECRET_PLACEHOLDER),
      expiresInDays: INVITATION_DAYS,
    });
    const emailId = await queueEmail(t, { to: normalizeEmail(input.email), ...parts, kind: "invitation", studioId: input.studioId, secret: token });
    return { token, emailId };
  });
}

export function invitationLink(publicUrl: string, token: string): string {
  return `${publicUrl.replace(/\/+$/, "")}/invitations/${token}`;
}

export async function listPendingInvitations(studioId: string): Promise<PendingInvitation[]> {
  return db("invitations as i")
    .leftJoin("clients as c", "c.id", "i.client_id")
    .select("i.id", "i.email", "i.role", "c.name as clientName", db.raw(`to_char(i.expires_at AT TIME ZONE 'UTC', 'YYYY-MM-DD HH24:MI') || ' UTC' AS "expiresAt"`))
    .where("i.studio_id", studioId)
    .whereNull("i.accepted_at")
    .andWhere("i.expires_at", ">", db.fn.now())
    .orderBy("i.created_at", "desc");
}

/** The invitation behind a token, if it is neither used nor expired. */
export async function findOpenInvitation(token: string): Promise<OpenInvitation | undefined> {
  if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) return undefined;
  return db("invitations as i")
    .join("studios as s", "s.id", "i.studio_id")
    .first("i.id", "i.studio_id as studioId", "s.name as studioName", "i.email", "i.role", "i.client_id as clientId")
    .where("i.token_hash", hashToken(token))
    .whereNull("i.accepted_at")
    .andWhere("i.expires_at", ">", db.fn.now());
}

export async function emailHasAccount(email: string): Promise<boolean> {
  return Boolean(await db("users").first("id").whereRaw("lower(email) = ?", [normalizeEmail(email)]));
}

export type AcceptResult = { ok: true; userId: string; studioId: string } | { ok: false; message: string };

/** Creates the account and its membership, and uses up the invitation, in one transaction. */
export async function acceptInvitation(token: string, input: { name: string; password: string }): Promise<AcceptResult> {
  const passwordHash = await hashPassword(input.password);
  return db.transaction(async (trx) => {
    const invitation = await trx("invitations")
      .first("id", "studio_id", "email", "role", "client_id")
      .where("token_hash", hashToken(token))
      .whereNull("accepted_at")
      .andWhere("expires_at", ">", trx.fn.now())
      .forUpdate();
    if (!invitation) return { ok: false, message: "This invitation has been used or has expired. Ask the studio for a new one." };
    const existing = await trx("users").first("id").whereRaw("lower(email) = ?", [invitation.email]);
    if (existing) return { ok: false, message: "An account with this e-mail already exists. Sign in instead." };
    const [user] = await trx("users").insert({ email: invitation.email, name: input.name, password_hash: passwordHash }).returning<{ id: string }[]>("id");
    await trx("memberships").insert({ user_id: user.id, studio_id: invitation.studio_id, role: invitation.role, client_id: invitation.client_id });
    await trx("invitations").where({ id: invitation.id }).update({ accepted_at: trx.fn.now() });
    return { ok: true, userId: user.id, studioId: invitation.studio_id };
  });
}

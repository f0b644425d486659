// An owner invites; the invitee accepts with a name and password, is signed
// in, holds the invited role, and the link cannot be used again.
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import bcrypt from "bcryptjs";
import { db } from "../../app/lib/db.server.ts";
import { readSession } from "../../app/lib/session.server.ts";
import { deliverPending } from "../../app/lib/mail/mailer.server.ts";
import type { MailTransport } from "../../app/lib/mail/transport.server.ts";
import * as team from "../../app/routes/team.tsx";
import * as invitation from "../../app/routes/invitation.tsx";
import { createFixture, dataOf, destroyFixture, outcomeOf, requestAs, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
beforeAll(async () => {
  fixture = await createFixture();
});
afterAll(async () => destroyFixture(fixture));

async function invite(form: Record<string, string>) {
  return dataOf<{ inviteLink?: string; errors: Record<string, string> }>(
    await team.action({ request: requestAs(fixture, "owner", "/team", { form: { intent: "invite", ...form } }), params: {}, context: {} } as never),
  );
}

function anonymous(path: string, form?: Record<string, string>) {
  return new Request(`http://tidemark.test${path}`, form ? { method: "POST", body: new URLSearchParams(form), headers: { "Content-Type": "application/x-www-form-urlencoded" } } : {});
}

describe("invitations", () => {
  it("keeps the link out of the stored e-mail: sealed beside it until sent, then gone", async () => {
    const email = `sealed-${fixture.tag}@fixture.test`;
    const created = await invite({ email, role: "engineer" });
    const token = new URL(created.body.inviteLink ?? "").pathname.split("/").pop() as string;
    const row = await db("outbox_emails").first().where({ to_address: email });
    expect(row.text).not.toContain(token);
    expect(row.html ?? "").not.toContain(token);
    expect(row.secret_sealed).not.toContain(token);
    expect(row.text).toContain("[[tidemark-secret]]");
    const sent: { text: string; html?: string }[] = [];
    const transport = { sendMail: async (message: { text: string; html?: string }) => void sent.push(message) } as unknown as MailTransport;
    expect((await deliverPending(db, { transport, from: "Tidemark <studio@tidemark.test>", ids: [row.id] })).sent).toEqual([row.id]);
    // The invitee gets the link; the stored copy keeps only the placeholder.
    expect(sent[0].text).toContain(`/invitations/${token}`);
    expect(sent[0].html ?? "").toContain(`/invitations/${token}`);
    const after = await db("outbox_emails").first().where({ id: row.id });
    expect(after.secret_sealed).toBeNull();
    expect(JSON.stringify(after)).not.toContain(token);
    await db("outbox_emails").where({ id: row.id }).delete();
  });

  it("needs a client for a client invitation and refuses an e-mail that has an account", async () => {
    expect((await invite({ email: `c-${fixture.tag}@fixture.test`, role: "client", clientId: "" })).body.errors).toEqual({ clientId: "Choose which client this person belongs to" });
    const taken = await invite({ email: fixture.users.engineer.email.toUpperCase(), role: "engineer" });
    expect(taken.status).toBe(400);
    expect(taken.body.errors).toEqual({ email: "This e-mail already has a Tidemark account" });
  });

  it("is accepted once, creating the account with the invited role and signing in", async () => {
    const email = `newclient-${fixture.tag}@fixture.test`;
    const created = await invite({ email, role: "client", clientId: fixture.clientId });
    expect(created.status).toBe(200);
    const link = new URL(created.body.inviteLink ?? "");
    expect(link.pathname).toMatch(/^\/invitations\/[A-Za-z0-9_-]{43}$/);
    const token = link.pathname.split("/").pop() as string;
    // Only a hash of the token is stored.
    expect(await db("invitations").first().where({ token_hash: token })).toBeUndefined();

    const page = (await invitation.loader({ request: anonymous(link.pathname), params: { token }, context: {} } as never)) as { email: string; role: string };
    expect(page).toMatchObject({ email, role: "client" });

    const mismatch = dataOf<{ errors: Record<string, string>; values: Record<string, string> }>(
      await invitation.action({ request: anonymous(link.pathname, { name: "Nova Client", password: "long-enough-1", confirm: "long-enough-2" }), params: { token }, context: {} } as never),
    );
    expect(mismatch.status).toBe(400);
    expect(mismatch.body.errors).toEqual({ confirm: "The two passwords differ" });
    expect(mismatch.body.values).toEqual({ name: "Nova Client" });
    const short = dataOf<{ errors: Record<string, string> }>(await invitation.action({ request: anonymous(link.pathname, { name: "Nova Client", password: "short", confirm: "short" }), params: { token }, context: {} } as never));
    expect(short.body.errors).toEqual({ password: "Use at least 10 characters" });

    const accepted = await invitation.action({ request: anonymous(link.pathname, { name: "Nova Client", password: "long-enough-1", confirm: "long-enough-1" }), params: { token }, context: {} } as never);
    expect(accepted).toBeInstanceOf(Response);
    const response = accepted as Response;
    expect(response.headers.get("Location")).toBe("/");
    const session = await readSession((response.headers.get("Set-Cookie") ?? "").split(";")[0]);
    const user = await db("users").first("id", "name", "password_hash").whereRaw("lower(email) = ?", [email]);
    expect(session?.userId).toBe(user.id);
    expect(user.name).toBe("Nova Client");
    expect(await bcrypt.compare("long-enough-1", user.password_hash)).toBe(true);
    expect(bcrypt.getRounds(user.password_hash)).toBeGreaterThanOrEqual(10);
    expect(await db("memberships").first("role", "client_id", "studio_id").where({ user_id: user.id })).toEqual({ role: "client", client_id: fixture.clientId, studio_id: fixture.studioId });

    // A used link is gone.
    expect(await outcomeOf(() => invitation.loader({ request: anonymous(link.pathname), params: { token }, context: {} } as never))).toBe("404");
    expect(await outcomeOf(() => invitation.action({ request: anonymous(link.pathname, { name: "Again", password: "long-enough-1", confirm: "long-enough-1" }), params: { token }, context: {} } as never))).toBe("404");
  });

  it("does not open an expired invitation", async () => {
    const created = await invite({ email: `late-${fixture.tag}@fixture.test`, role: "engineer" });
    const token = new URL(created.body.inviteLink ?? "").pathname.split("/").pop() as string;
    await db("invitations").where({ email: `late-${fixture.tag}@fixture.test` }).update({ expires_at: db.raw(`now() - interval '1 minute'`) });
    expect(await outcomeOf(() => invitation.loader({ request: anonymous(`/invitations/${token}`), params: { token }, context: {} } as never))).toBe("404");
  });
});

// The outbox and templates end to end: queued rows go over real SMTP to our
// local fake server (started here on free ports) and are read back through its
// HTTP API, parsed from the wire by mailparser.
import { randomUUID } from "node:crypto";
import knex, { type Knex } from "knex";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSmtpFake, type FakeMessage, type SmtpFake } from "../../scripts/fakes/smtp.ts";
import { deliverPending, queueEmail, startMailDelivery } from "../../app/lib/mail/mailer.server.ts";
import { createMailTransport, type MailTransport } from "../../app/lib/mail/transport.server.ts";
import { escapeHtml } from "../../app/lib/mail/layout.server.ts";
import {
  approvedEmail,
  changesRequestedEmail,
  commentEmail,
  invitationEmail,
  invoiceSentEmail,
  paymentReceiptEmail,
  renderForReviewEmail,
  type EmailParts,
} from "../../app/lib/mail/templates.server.ts";

const FROM = "Tidemark Test <studio@tidemark-test.localhost>";

let db: Knex;
let fake: SmtpFake;
let transport: MailTransport;
const ownIds: string[] = [];

async function api<T>(path: string, init?: RequestInit): Promise<T> {
  const res = await fetch(`${fake.apiUrl}${path}`, init);
  expect(res.ok, `${path} answered ${res.status}`).toBe(true);
  return (await res.json()) as T;
}

const byOutboxId = (messages: FakeMessage[], id: string) => messages.filter((m) => m.messageId === `<${id}@tidemark-test.localhost>`);

async function queue(parts: { subject: string; text: string; html?: string | null }, to: string, kind: string) {
  const id = await queueEmail(db, { to, ...parts, kind });
  ownIds.push(id);
  return id;
}

beforeAll(async () => {
  db = knex({ client: "pg", connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:54329/tidemark_test", pool: { min: 0, max: 4 } });
  expect(await db.schema.hasTable("outbox_emails"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  fake = await startSmtpFake({ port: 0, apiPort: 0, dataFile: null });
  transport = createMailTransport(fake.smtpUrl, {});
});

afterAll(async () => {
  if (db && ownIds.length) await db("outbox_emails").whereIn("id", ownIds).delete();
  transport?.close();
  await fake?.close();
  await db?.destroy();
});

const studioName = "Harbour Room";
const templates: { kind: string; parts: (link: string) => EmailParts; subject: RegExp }[] = [
  {
    kind: "invitation",
    parts: (link) => invitationEmail({ studioName, inviterName: "Ines Varga", role: "client", link, expiresInDays: 7 }),
    subject: /^Ines Varga invited you to Harbour Room on Tidemark$/,
  },
  {
    kind: "render_for_review",
    parts: (link) => renderForReviewEmail({ studioName, engineerName: "Tomas Reyes", releaseTitle: "Low Tide Lights", trackTitle: "Salt Glass", note: "Brighter top end, as we discussed.", link }),
    subject: /^New master of “Salt Glass” \(Low Tide Lights\) ready for review$/,
  },
  {
    kind: "comment",
    parts: (link) => commentEmail({ studioName, authorName: "Mara Quill", releaseTitle: "Low Tide Lights", trackTitle: "Salt Glass", atSeconds: 83.4, body: "The snare feels a little far back here.", link }),
    subject: /^Mara Quill commented on “Salt Glass” \(Low Tide Lights\)$/,
  },
  {
    kind: "changes_requested",
    parts: (link) => changesRequestedEmail({ studioName, clientName: "Mara Quill", releaseTitle: "Low Tide Lights", note: "Less low end in the intro, please.", link }),
    subject: /^Changes asked for “Low Tide Lights”$/,
  },
  {
    kind: "approved",
    parts: (link) => approvedEmail({ studioName, clientName: "Mara Quill", releaseTitle: "Low Tide Lights", trackTitle: "Low Tide Lights", link }),
    subject: /^“Low Tide Lights” approved by Mara Quill$/,
  },
  {
    kind: "invoice_sent",
    parts: (link) => invoiceSentEmail({ studioName, releaseTitle: "Low Tide Lights", invoiceNumber: "HR-2026-014", amountCents: 48_000, currency: "eur", dueDate: new Date("2026-12-31T00:00:00Z"), link }),
    subject: /^Invoice HR-2026-014 from Harbour Room: €480\.00$/,
  },
  {
    kind: "payment_receipt",
    parts: (link) => paymentReceiptEmail({ studioName, releaseTitle: "Low Tide Lights", invoiceNumber: "HR-2026-014", amountCents: 48_050, currency: "EUR", paidAt: new Date("2026-12-02T10:00:00Z"), link }),
    subject: /^Receipt: €480\.50 paid for invoice HR-2026-014$/,
  },
];

describe("mail templates through the outbox and SMTP", () => {
  it.each(templates)("$kind reaches the recipient with its subject and link", async ({ kind, parts, subject }) => {
    const token = randomUUID();
    const link = `https://tidemark.example.test/r/${token}?tab=review&from=mail`;
    const to = `${kind}-${token.slice(0, 8)}@example.test`;
    const email = parts(link);
    const id = await queue(email, to, kind);

    const result = await deliverPending(db, { transport, from: FROM, ids: [id] });
    expect(result).toEqual({ sent: [id], retrying: [], failed: [] });

    const found = byOutboxId(await api<FakeMessage[]>("/messages"), id);
    expect(found).toHaveLength(1);
    expect(await api<FakeMessage[]>(`/messages?to=${encodeURIComponent(to.toUpperCase())}`)).toEqual(found);
    const message = await api<FakeMessage>(`/messages/${found[0]!.id}`);
    expect(message.to).toEqual([to]);
    expect(message.from).toContain("studio@tidemark-test.localhost");
    expect(message.subject).toMatch(subject);
    expect(message.text).toContain(link);
    expect(message.html).toContain(`href="${escapeHtml(link)}"`);

    const row = await db("outbox_emails").where({ id }).first();
    expect(row).toMatchObject({ state: "sent", attempts: 1, kind, to_address: to, last_error: null });
    expect(row.sent_at).toBeInstanceOf(Date);
  });

  it("shows the time of a comment and the amounts in the text part", () => {
    const comment = commentEmail({ studioName, authorName: "Mara Quill", releaseTitle: "EP", trackTitle: "One", atSeconds: 83.9, body: "x", link: "https://t.example.test/c" });
    expect(comment.text).toContain("at 1:23");
    const invoice = invoiceSentEmail({ studioName, releaseTitle: "EP", invoiceNumber: "7", amountCents: 123_456, currency: "usd", link: "https://t.example.test/i" });
    expect(invoice.text).toContain("$1,234.56");
  });

  it("escapes what people wrote in the HTML part and keeps it verbatim in the text part", () => {
    const body = `<script>alert("x")</script> & more`;
    const email = commentEmail({ studioName, authorName: "<b>Eve</b>", releaseTitle: "EP", body, link: "https://t.example.test/c" });
    expect(email.html).not.toContain("<script>");
    expect(email.html).not.toContain("<b>Eve</b>");
    expect(email.html).toContain("&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; more");
    expect(email.text).toContain(`> ${body}`);
  });

  it("refuses links that are not absolute http(s) URLs", () => {
    expect(() => approvedEmail({ studioName, clientName: "M", releaseTitle: "EP", link: "javascript:alert(1)" })).toThrow(/http/);
    expect(() => approvedEmail({ studioName, clientName: "M", releaseTitle: "EP", link: "/releases/1" })).toThrow(/absolute/);
  });

  it("refuses to queue a message without a valid recipient", async () => {
    await expect(queueEmail(db, { to: "not-an-address", subject: "s", text: "t", kind: "test" })).rejects.toThrow();
  });

  it("marks a message refused for good (5xx) as failed without retrying", async () => {
    const id = await queue({ subject: "Refused", text: "x" }, "bounce@example.test", "test");
    const result = await deliverPending(db, { transport, from: FROM, ids: [id] });
    expect(result.failed).toEqual([id]);
    const row = await db("outbox_emails").where({ id }).first();
    expect(row).toMatchObject({ state: "failed", attempts: 1 });
    expect(row.last_error).toMatch(/550/);
    expect((await deliverPending(db, { transport, from: FROM, ids: [id], now: new Date(Date.now() + 86_400_000) })).sent).toEqual([]);
  });

  it("sends a message once when two deliverers run at the same moment", async () => {
    const id = await queue({ subject: "Race", text: "once", html: "<p>once</p>" }, `race-${randomUUID().slice(0, 8)}@example.test`, "test");
    const [a, b] = await Promise.all([
      deliverPending(db, { transport, from: FROM, ids: [id] }),
      deliverPending(db, { transport: createMailTransport(fake.smtpUrl, {}), from: FROM, ids: [id] }),
    ]);
    expect([...a.sent, ...b.sent]).toEqual([id]);
    expect(byOutboxId(await api<FakeMessage[]>("/messages"), id)).toHaveLength(1);
  });

  it("delivers from the interval runner", async () => {
    const id = await queue({ subject: "Runner", text: "from the loop" }, `runner-${randomUUID().slice(0, 8)}@example.test`, "test");
    const runner = startMailDelivery(db, { transport, from: FROM, ids: [id], intervalMs: 50, log: () => {} });
    try {
      for (let i = 0; i < 100 && byOutboxId(fake.messages(), id).length === 0; i++) await new Promise((r) => setTimeout(r, 50));
    } finally {
      await runner.stop();
    }
    expect(byOutboxId(fake.messages(), id)).toHaveLength(1);
    expect((await db("outbox_emails").where({ id }).first()).state).toBe("sent");
  });

  it("clears the fake's messages on DELETE /messages", async () => {
    expect((await api<FakeMessage[]>("/messages")).length).toBeGreaterThan(0);
    await api("/messages", { method: "DELETE" });
    expect(await api<FakeMessage[]>("/messages")).toEqual([]);
    const res = await fetch(`${fake.apiUrl}/messages/${randomUUID()}`);
    expect(res.status).toBe(404);
  });
});

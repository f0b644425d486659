// Nothing is lost while the mail server is down: the message stays queued,
// waits out its back-off, and is delivered exactly once when the server is back.
// The fake is started and stopped here on a port of its own.
import { mkdtempSync, rmSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { randomUUID } from "node:crypto";
import knex, { type Knex } from "knex";
import { afterAll, beforeAll, expect, it } from "vitest";
import { startSmtpFake, type SmtpFake } from "../../scripts/fakes/smtp.ts";
import { deliverPending, MAX_ATTEMPTS, queueEmail, retryDelayMs } from "../../app/lib/mail/mailer.server.ts";
import { createMailTransport } from "../../app/lib/mail/transport.server.ts";
import { invitationEmail } from "../../app/lib/mail/templates.server.ts";

const FROM = "Tidemark Test <studio@tidemark-test.localhost>";
let db: Knex;
let dir: string;
let fake: SmtpFake | null = null;
const ownIds: string[] = [];

beforeAll(async () => {
  db = knex({ client: "pg", connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:54329/tidemark_test", pool: { min: 0, max: 2 } });
  expect(await db.schema.hasTable("outbox_emails"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  dir = mkdtempSync(path.join(os.tmpdir(), "tidemark-mail-retry-"));
});

afterAll(async () => {
  if (db && ownIds.length) await db("outbox_emails").whereIn("id", ownIds).delete();
  await fake?.close();
  await db?.destroy();
  rmSync(dir, { recursive: true, force: true });
});

it("backs off from the same delay schedule it documents", () => {
  expect([1, 2, 3, 4].map(retryDelayMs)).toEqual([30_000, 60_000, 120_000, 240_000]);
  expect(retryDelayMs(20)).toBe(3_600_000);
});

it("keeps a message queued while the server is down and sends it once when it is back", async () => {
  const dataFile = path.join(dir, "fake-smtp.jsonl");
  // Learn a free pair of ports, then stop the server: the mail server is "down".
  fake = await startSmtpFake({ port: 0, apiPort: 0, dataFile });
  const { smtpPort, apiPort, smtpUrl } = fake;
  await fake.close();
  fake = null;
  const transport = createMailTransport(smtpUrl, {});

  const to = `retry-${randomUUID().slice(0, 8)}@example.test`;
  const id = await queueEmail(db, { to, kind: "invitation", ...invitationEmail({ studioName: "Harbour Room", inviterName: "Ines Varga", role: "engineer", link: "https://tidemark.example.test/invite/abc" }) });
  ownIds.push(id);

  const t0 = new Date(Date.now() + 1000);
  const down = await deliverPending(db, { transport, from: FROM, ids: [id], now: t0 });
  expect(down).toEqual({ sent: [], retrying: [id], failed: [] });
  let row = await db("outbox_emails").where({ id }).first();
  expect(row).toMatchObject({ state: "queued", attempts: 1 });
  expect(row.last_error).toMatch(/ECONNREFUSED|connect/i);
  expect(row.next_attempt_at.getTime()).toBe(t0.getTime() + retryDelayMs(1));

  fake = await startSmtpFake({ port: smtpPort, apiPort, dataFile });

  // Back, but the back-off has not run out: nothing is sent yet.
  const early = await deliverPending(db, { transport, from: FROM, ids: [id], now: new Date(t0.getTime() + 10_000) });
  expect(early).toEqual({ sent: [], retrying: [], failed: [] });
  expect(fake.messages().filter((m) => m.to.includes(to))).toHaveLength(0);

  const due = await deliverPending(db, { transport, from: FROM, ids: [id], now: new Date(t0.getTime() + retryDelayMs(1) + 1) });
  expect(due).toEqual({ sent: [id], retrying: [], failed: [] });
  row = await db("outbox_emails").where({ id }).first();
  expect(row).toMatchObject({ state: "sent", attempts: 2, last_error: null });

  const later = await deliverPending(db, { transport, from: FROM, ids: [id], now: new Date(t0.getTime() + 86_400_000) });
  expect(later.sent).toEqual([]);

  const received = async () => {
    const res = await fetch(`http://127.0.0.1:${apiPort}/messages`);
    return ((await res.json()) as { to: string[]; subject: string; messageId: string }[]).filter((m) => m.to.includes(to));
  };
  expect(await received()).toHaveLength(1);
  expect((await received())[0]).toMatchObject({ subject: "Ines Varga invited you to Harbour Room on Tidemark", messageId: `<${id}@tidemark-test.localhost>` });

  // The fake keeps what it received across a restart (its JSONL file).
  await fake.close();
  fake = await startSmtpFake({ port: smtpPort, apiPort, dataFile });
  expect(await received()).toHaveLength(1);
  transport.close();
});

it("gives up after the last allowed attempt and says why", async () => {
  const probe = await startSmtpFake({ port: 0, apiPort: 0, dataFile: null });
  const downUrl = probe.smtpUrl;
  await probe.close();
  const transport = createMailTransport(downUrl, {});
  const id = await queueEmail(db, { to: "gives-up@example.test", subject: "Last try", text: "x", kind: "test" });
  ownIds.push(id);
  await db("outbox_emails").where({ id }).update({ attempts: MAX_ATTEMPTS - 1 });
  const result = await deliverPending(db, { transport, from: FROM, ids: [id] });
  expect(result).toEqual({ sent: [], retrying: [], failed: [id] });
  const row = await db("outbox_emails").where({ id }).first();
  expect(row).toMatchObject({ state: "failed", attempts: MAX_ATTEMPTS });
  expect(row.last_error).toMatch(/ECONNREFUSED|connect/i);
  transport.close();
});

// Billing against the real database and the local payment fake: an invoice
// built from the studio's rates (extra revisions from printed chain
// revisions), sent with its e-mail, paid through Checkout, with the fake's
// signed webhook delivered to the real webhook route module. Bad signatures,
// replays, unknown sessions and wrong amounts change nothing.
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { randomUUID } from "node:crypto";
import type Stripe from "stripe";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { signPayload, startPaymentsFake, DEFAULT_WEBHOOK_SECRET, type PaymentsFake } from "../../scripts/fakes/payments.ts";
import { db } from "../../app/lib/db.server.ts";
import { createPaymentsClient } from "../../app/lib/payments/payments.server.ts";
import { buildInvoiceLines, extraRevisions } from "../../app/lib/billing/invoice-lines.ts";
import { canMove, InvoiceStateError } from "../../app/lib/billing/invoice-state.ts";
import { action as webhookAction } from "../../app/routes/api.payments.webhook.ts";
import { buildInvoice, expireOtherCheckouts, getInvoice, isReleasePaid, sendInvoice, startCheckout, voidInvoice, BillingError } from "../../app/models/invoice.server.ts";
import { saveStudioSettings } from "../../app/models/studio-settings.server.ts";
import { createFixture, destroyFixture, type Fixture } from "./fixtures.ts";

let fixture: Fixture;
let fake: PaymentsFake;
let receiver: Server;
let receiverUrl: string;
let client: Stripe;
const eventIds: string[] = [];
const responses: { status: number; body: { outcome?: string } }[] = [];

const TRACK_CENTS = 25_000;
const REVISION_CENTS = 6_000;
const urls = { successUrl: "http://127.0.0.1:3100/paid?session={CHECKOUT_SESSION_ID}", cancelUrl: "http://127.0.0.1:3100/cancelled" };

/** Prints of a track: one finished print render per chain revision listed (revision numbers may repeat). */
async function addPrints(trackId: string, revisions: number[]) {
  const tag = randomUUID().slice(0, 8);
  const [mix] = await db("mixes")
    .insert({ track_id: trackId, version: 1, original_name: "mix.wav", storage_key: `mixes/${tag}/mix.wav`, size_bytes: 1000, sample_rate_hz: 48000, channels: 2, bit_depth: 24, sample_format: "int", frames: 100 })
    .returning("id");
  const [chain] = await db("chains").insert({ studio_id: fixture.studioId, track_id: trackId, name: `Chain ${tag}` }).returning("id");
  const revisionIds = new Map<number, string>();
  for (const n of revisions) {
    if (!revisionIds.has(n)) {
      const [rev] = await db("chain_revisions").insert({ chain_id: chain.id, revision: n, params: JSON.stringify({ stages: [] }) }).returning("id");
      revisionIds.set(n, rev.id);
    }
    await db("renders").insert({ mix_id: mix.id, chain_revision_id: revisionIds.get(n), kind: "print", state: "done", output_key: `renders/${randomUUID()}.wav` });
  }
  // A saved but never printed revision and a failed print are not billed.
  const [unprinted] = await db("chain_revisions").insert({ chain_id: chain.id, revision: 99, params: JSON.stringify({ stages: [] }) }).returning("id");
  await db("renders").insert({ mix_id: mix.id, chain_revision_id: unprinted.id, kind: "print", state: "failed" });
  await db("renders").insert({ mix_id: mix.id, chain_revision_id: unprinted.id, kind: "preview", state: "done", output_key: `renders/${randomUUID()}.wav` });
}

async function addRelease(title: string) {
  const [release] = await db("releases").insert({ studio_id: fixture.studioId, client_id: fixture.clientId, title, kind: "single" }).returning("id");
  const [track] = await db("tracks").insert({ release_id: release.id, position: 1, title }).returning("id");
  await addPrints(track.id, [1]);
  return release.id as string;
}

async function postToWebhook(body: string, signature: string | null) {
  const headers: Record<string, string> = { "content-type": "application/json" };
  if (signature) headers["stripe-signature"] = signature;
  const res = await fetch(receiverUrl, { method: "POST", headers, body });
  return { status: res.status, body: (await res.json()) as { outcome?: string } };
}

function completedEvent(session: Partial<Stripe.Checkout.Session>) {
  const id = `evt_test_${randomUUID().replaceAll("-", "")}`;
  eventIds.push(id);
  return JSON.stringify({ id, object: "event", type: "checkout.session.completed", created: Math.floor(Date.now() / 1000), data: { object: { object: "checkout.session", payment_status: "paid", status: "complete", ...session } } });
}

const invoiceRow = (id: string) => db("invoices").where({ id }).first();
const outboxFor = (invoiceId: string, kind: string) => db("outbox_emails").where({ invoice_id: invoiceId, kind });

beforeAll(async () => {
  expect(await db.schema.hasTable("invoices"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  fixture = await createFixture();
  await saveStudioSettings(fixture.studioId, { currency: "EUR", trackRateCents: TRACK_CENTS, revisionRateCents: REVISION_CENTS });
  // The fixture's release gets two more tracks: revisions 1, 2, 2 (re-print), 3 → 2 extra; 1 → none; never printed → none.
  await db("tracks").insert([
    { release_id: fixture.releaseId, position: 2, title: "Salt & Cedar" },
    { release_id: fixture.releaseId, position: 3, title: "Harbour Lights" },
  ]);
  const tracks = await db("tracks").where({ release_id: fixture.releaseId }).orderBy("position");
  await addPrints(tracks[0].id, [1, 2, 2, 3]);
  await addPrints(tracks[1].id, [1]);

  receiver = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", async () => {
      try {
        const headers = new Headers();
        for (const [k, v] of Object.entries(req.headers)) if (typeof v === "string") headers.set(k, v);
        const request = new Request(`http://tidemark.test${req.url}`, { method: req.method, headers, body: Buffer.concat(chunks) });
        const response = await webhookAction({ request });
        const text = await response.text();
        responses.push({ status: response.status, body: JSON.parse(text) });
        res.writeHead(response.status, { "content-type": "application/json" });
        res.end(text);
      } catch (error) {
        res.writeHead(500);
        res.end(JSON.stringify({ error: String(error) }));
      }
    });
  });
  await new Promise<void>((resolve) => receiver.listen(0, "127.0.0.1", resolve));
  receiverUrl = `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/api/payments/webhook`;
  fake = await startPaymentsFake({ port: 0, webhookSecret: DEFAULT_WEBHOOK_SECRET, webhookUrl: receiverUrl });
  client = createPaymentsClient({ NODE_ENV: "test", STRIPE_API_HOST: "127.0.0.1", STRIPE_API_PORT: String(fake.port), STRIPE_API_PROTOCOL: "http" });
});

afterAll(async () => {
  if (fixture) await db("outbox_emails").where({ studio_id: fixture.studioId }).delete();
  const fakeEvents = fake ? ((await fetch(`${fake.url}/_fake/events`).then((r) => r.json())) as { event: { id: string } }[]) : [];
  const ids = [...eventIds, ...fakeEvents.map((e) => e.event.id)];
  if (ids.length) await db("payment_events").whereIn("event_id", ids).delete();
  // Renders hold their chain revision with NO ACTION, so they go before the studio's cascade.
  if (fixture) await db("renders").whereIn("chain_revision_id", db("chain_revisions as cr").join("chains as c", "c.id", "cr.chain_id").where("c.studio_id", fixture.studioId).select("cr.id")).delete();
  await destroyFixture(fixture);
  await fake?.close();
  await new Promise<void>((resolve) => (receiver ? receiver.close(() => resolve()) : resolve()));
  await db.destroy();
});

describe("invoice lines from rates", () => {
  it("bills every track once and each printed revision beyond the first", () => {
    expect([0, 1, 2, 5].map(extraRevisions)).toEqual([0, 0, 1, 4]);
    const lines = buildInvoiceLines(
      [
        { trackId: "b", position: 2, title: "Second", printedRevisions: 1 },
        { trackId: "a", position: 1, title: "First", printedRevisions: 4 },
      ],
      { trackRateCents: 100, revisionRateCents: 7 },
    );
    expect(lines.map((l) => [l.position, l.kind, l.trackId, l.quantity, l.unitCents, l.amountCents])).toEqual([
      [1, "track", "a", 1, 100, 100],
      [2, "track", "b", 1, 100, 100],
      [3, "revision", "a", 3, 7, 21],
    ]);
    expect(lines[2]!.description).toBe("Extra revisions: 1. First");
    expect(() => buildInvoiceLines([], { trackRateCents: 1.5, revisionRateCents: 0 })).toThrow(/whole number/);
  });

  it("allows only draft → sent → paid and draft/sent → void", () => {
    expect(canMove("draft", "sent")).toBe(true);
    expect(canMove("sent", "paid")).toBe(true);
    expect(canMove("draft", "paid")).toBe(false);
    expect(canMove("paid", "void")).toBe(false);
    expect(canMove("void", "draft")).toBe(false);
  });
});

describe("an invoice from draft to paid", () => {
  let invoiceId: string;

  it("builds a draft from the studio's rates and the release's printed revisions", async () => {
    const invoice = await buildInvoice(fixture.releaseId);
    invoiceId = invoice.id;
    expect(invoice).toMatchObject({ state: "draft", number: null, currency: "EUR", totalCents: 3 * TRACK_CENTS + 2 * REVISION_CENTS });
    expect(invoice.lines.map((l) => [l.kind, l.quantity, l.amountCents])).toEqual([
      ["track", 1, TRACK_CENTS],
      ["track", 1, TRACK_CENTS],
      ["track", 1, TRACK_CENTS],
      ["revision", 2, 2 * REVISION_CENTS],
    ]);
    expect(invoice.lines[1]!.description).toBe("Mastering: 2. Salt & Cedar");
    // Rebuilding a draft after a rate change replaces its lines; it stays the one invoice.
    await saveStudioSettings(fixture.studioId, { trackRateCents: TRACK_CENTS + 1 });
    const rebuilt = await buildInvoice(fixture.releaseId);
    expect(rebuilt.id).toBe(invoiceId);
    expect(rebuilt.totalCents).toBe(3 * (TRACK_CENTS + 1) + 2 * REVISION_CENTS);
    await saveStudioSettings(fixture.studioId, { trackRateCents: TRACK_CENTS });
    expect((await buildInvoice(fixture.releaseId)).totalCents).toBe(3 * TRACK_CENTS + 2 * REVISION_CENTS);
    expect(await db("invoice_lines").where({ invoice_id: invoiceId })).toHaveLength(4);
  });

  it("cannot be paid as a draft; sending numbers it and queues the e-mail to the client", async () => {
    await expect(startCheckout(invoiceId, urls, { client })).rejects.toThrow(BillingError);
    const sent = await sendInvoice(invoiceId, { appUrl: "http://127.0.0.1:3100" });
    expect(sent).toMatchObject({ state: "sent", number: "INV-0001" });
    expect(sent.sentAt).toBeInstanceOf(Date);
    const mails = await outboxFor(invoiceId, "invoice-sent");
    expect(mails.map((m) => m.to_address)).toEqual([fixture.users.client.email]);
    expect(mails[0].subject).toContain("INV-0001");
    expect(mails[0].text).toContain("€870.00");
    expect(mails[0].text).toContain(`http://127.0.0.1:3100/releases/${fixture.releaseId}`);
    await expect(sendInvoice(invoiceId)).rejects.toThrow(InvoiceStateError);
    await expect(buildInvoice(fixture.releaseId)).rejects.toThrow(/already sent/);
  });

  it("is paid through Checkout: the fake's signed webhook reaches the route and marks it paid", async () => {
    expect(await isReleasePaid(fixture.releaseId)).toBe(false);
    const { sessionId, url } = await startCheckout(invoiceId, urls, { client, customerEmail: fixture.users.client.email });
    expect((await getInvoice(invoiceId))!.checkoutSessionIds).toEqual([sessionId]);
    const session = await client.checkout.sessions.retrieve(sessionId);
    expect(session.amount_total).toBe(3 * TRACK_CENTS + 2 * REVISION_CENTS);

    const paid = await fetch(`${url}/confirm`, { method: "POST", redirect: "manual" });
    expect(paid.status).toBe(303);
    expect(responses.at(-1)).toEqual({ status: 200, body: { received: true, outcome: "paid" } });
    const row = await invoiceRow(invoiceId);
    expect(row.state).toBe("paid");
    expect(row.paid_at).toBeInstanceOf(Date);
    expect(await isReleasePaid(fixture.releaseId)).toBe(true);
    const receipts = await outboxFor(invoiceId, "payment-receipt");
    expect(receipts.map((m) => m.to_address)).toEqual([fixture.users.client.email]);
    expect(receipts[0].subject).toBe("Receipt: €870.00 paid for invoice INV-0001");
    await expect(voidInvoice(invoiceId)).rejects.toThrow(InvoiceStateError);
  });

  it("a replayed event changes nothing", async () => {
    const before = await invoiceRow(invoiceId);
    const events = (await fetch(`${fake.url}/_fake/events`).then((r) => r.json())) as { event: { id: string; data: { object: { id: string } } } }[];
    const [sessionId] = (await getInvoice(invoiceId))!.checkoutSessionIds;
    const event = events.find((e) => e.event.data.object.id === sessionId)!;
    const resend = await fetch(`${fake.url}/_fake/events/${event.event.id}/resend`, { method: "POST" });
    expect(((await resend.json()) as { status: number }).status).toBe(200);
    expect(responses.at(-1)!.body.outcome).toBe("replay");
    expect(await invoiceRow(invoiceId)).toEqual(before);
    expect(await outboxFor(invoiceId, "payment-receipt")).toHaveLength(1);
  });
});

describe("events that must not mark an invoice paid", () => {
  let invoiceId: string;
  let releaseId: string;
  let sessionId: string;
  let amount: number;

  beforeAll(async () => {
    releaseId = await addRelease("Tidewater Single");
    const invoice = await buildInvoice(releaseId);
    invoiceId = invoice.id;
    amount = invoice.totalCents;
    await sendInvoice(invoiceId, { appUrl: "http://127.0.0.1:3100" });
    sessionId = (await startCheckout(invoiceId, urls, { client })).sessionId;
  });

  async function expectUnchanged(run: () => Promise<void>) {
    const before = await invoiceRow(invoiceId);
    await run();
    expect(await invoiceRow(invoiceId)).toEqual(before);
    expect(before.state).toBe("sent");
    expect(await isReleasePaid(releaseId)).toBe(false);
    expect(await outboxFor(invoiceId, "payment-receipt")).toHaveLength(0);
  }

  it("a bad signature is refused with 400 and not recorded", async () => {
    await expectUnchanged(async () => {
      const body = completedEvent({ id: sessionId, amount_total: amount, currency: "eur" });
      const eventId = JSON.parse(body).id;
      expect((await postToWebhook(body, signPayload(body, "whsec_someone_else"))).status).toBe(400);
      expect((await postToWebhook(body, null)).status).toBe(400);
      const tampered = body.replace(`"amount_total":${amount}`, `"amount_total":${amount + 1}`);
      expect((await postToWebhook(tampered, signPayload(body, DEFAULT_WEBHOOK_SECRET))).status).toBe(400);
      expect(await db("payment_events").where({ event_id: eventId })).toHaveLength(0);
    });
  });

  it("an unknown session, a wrong amount or currency, or an unpaid session is recorded and ignored", async () => {
    await expectUnchanged(async () => {
      const cases: [Partial<Stripe.Checkout.Session>, string][] = [
        [{ id: "cs_test_not_ours", amount_total: amount, currency: "eur" }, "unknown-session"],
        [{ id: sessionId, amount_total: amount - 1, currency: "eur" }, "amount-mismatch"],
        [{ id: sessionId, amount_total: amount, currency: "usd" }, "amount-mismatch"],
        [{ id: sessionId, amount_total: amount, currency: "eur", payment_status: "unpaid" }, "not-paid"],
      ];
      for (const [session, outcome] of cases) {
        const body = completedEvent(session);
        const res = await postToWebhook(body, signPayload(body, DEFAULT_WEBHOOK_SECRET));
        expect(res).toEqual({ status: 200, body: { received: true, outcome } });
        expect(await db("payment_events").where({ event_id: JSON.parse(body).id })).toHaveLength(1);
      }
    });
  });

  it("a correct event for a voided invoice does not revive it", async () => {
    await voidInvoice(invoiceId);
    const body = completedEvent({ id: sessionId, amount_total: amount, currency: "eur" });
    const res = await postToWebhook(body, signPayload(body, DEFAULT_WEBHOOK_SECRET));
    expect(res.body.outcome).toBe("invoice-not-open");
    expect((await invoiceRow(invoiceId)).state).toBe("void");
    expect(await isReleasePaid(releaseId)).toBe(false);
    // After voiding, the release may be billed afresh.
    const fresh = await buildInvoice(releaseId);
    expect(fresh.id).not.toBe(invoiceId);
    expect((await getInvoice(fresh.id))!.state).toBe("draft");
  });
});

describe("an invoice with two payment pages", () => {
  /** A sent invoice with two recorded sessions: the first page expired, so a second was opened. */
  async function twoSessions(title: string) {
    const releaseId = await addRelease(title);
    const invoice = await buildInvoice(releaseId);
    await sendInvoice(invoice.id, { appUrl: "http://127.0.0.1:3100" });
    const first = await startCheckout(invoice.id, urls, { client });
    await client.checkout.sessions.expire(first.sessionId);
    const second = await startCheckout(invoice.id, urls, { client });
    expect(second.sessionId).not.toBe(first.sessionId);
    expect((await getInvoice(invoice.id))!.checkoutSessionIds).toEqual([first.sessionId, second.sessionId]);
    return { releaseId, invoice, first: first.sessionId, second: second.sessionId };
  }
  const paidEvent = (sessionId: string, amount: number) => {
    const body = completedEvent({ id: sessionId, amount_total: amount, currency: "eur" });
    return postToWebhook(body, signPayload(body, DEFAULT_WEBHOOK_SECRET));
  };

  it("is marked paid by a payment on the newer page; a late payment on the older one changes nothing but is kept for a refund", async () => {
    const { releaseId, invoice, first, second } = await twoSessions("Saltmarsh");
    expect((await paidEvent(second, invoice.totalCents)).body.outcome).toBe("paid");
    const paid = await invoiceRow(invoice.id);
    expect(paid.state).toBe("paid");
    expect(await isReleasePaid(releaseId)).toBe(true);
    expect((await paidEvent(first, invoice.totalCents)).body.outcome).toBe("already-paid");
    expect(await invoiceRow(invoice.id)).toEqual(paid);
    expect(await outboxFor(invoice.id, "payment-receipt")).toHaveLength(1);
    const sessions = await db("invoice_checkout_sessions").where({ invoice_id: invoice.id }).orderBy("created_at");
    expect(sessions.map((s) => [s.session_id, s.paid_at !== null])).toEqual([
      [first, true],
      [second, true],
    ]);
  });

  it("is marked paid by a payment on the older page; a replay of it changes nothing", async () => {
    const { invoice, first } = await twoSessions("Brackwater");
    const body = completedEvent({ id: first, amount_total: invoice.totalCents, currency: "eur" });
    const signature = signPayload(body, DEFAULT_WEBHOOK_SECRET);
    expect((await postToWebhook(body, signature)).body.outcome).toBe("paid");
    const paid = await invoiceRow(invoice.id);
    expect(paid.state).toBe("paid");
    expect((await postToWebhook(body, signature)).body.outcome).toBe("replay");
    expect(await invoiceRow(invoice.id)).toEqual(paid);
    expect(await outboxFor(invoice.id, "payment-receipt")).toHaveLength(1);
  });

  it("closes the other open page once paid, so it cannot be paid twice", async () => {
    const releaseId = await addRelease("Sandbar");
    const invoice = await buildInvoice(releaseId);
    await sendInvoice(invoice.id, { appUrl: "http://127.0.0.1:3100" });
    const first = await startCheckout(invoice.id, urls, { client });
    // A second page opened at the same time (another tab): both are recorded.
    await db("invoice_checkout_sessions").where({ session_id: first.sessionId }).update({ amount_cents: invoice.totalCents + 1 });
    const second = await startCheckout(invoice.id, urls, { client });
    await db("invoice_checkout_sessions").where({ session_id: first.sessionId }).update({ amount_cents: invoice.totalCents });
    expect((await client.checkout.sessions.retrieve(first.sessionId)).status).toBe("open");
    expect((await paidEvent(second.sessionId, invoice.totalCents)).body.outcome).toBe("paid");
    expect(await expireOtherCheckouts(invoice.id, second.sessionId, { client })).toEqual([first.sessionId]);
    expect((await client.checkout.sessions.retrieve(first.sessionId)).status).toBe("expired");
  });
});

describe("two deliveries of one event at once", () => {
  it("mark the invoice paid once and queue one receipt; an open payment page is reused", async () => {
    const releaseId = await addRelease("Driftglass");
    const invoice = await buildInvoice(releaseId);
    await sendInvoice(invoice.id, { appUrl: "http://127.0.0.1:3100" });
    const first = await startCheckout(invoice.id, urls, { client });
    const again = await startCheckout(invoice.id, urls, { client });
    expect(again).toEqual(first);
    const body = completedEvent({ id: first.sessionId, amount_total: invoice.totalCents, currency: "eur" });
    const signature = signPayload(body, DEFAULT_WEBHOOK_SECRET);
    const results = await Promise.all([postToWebhook(body, signature), postToWebhook(body, signature), postToWebhook(body, signature)]);
    expect(results.map((r) => r.status)).toEqual([200, 200, 200]);
    expect(results.map((r) => r.body.outcome).sort()).toEqual(["paid", "replay", "replay"]);
    expect((await invoiceRow(invoice.id)).state).toBe("paid");
    expect(await outboxFor(invoice.id, "payment-receipt")).toHaveLength(1);
    expect(await isReleasePaid(releaseId)).toBe(true);
  });
});

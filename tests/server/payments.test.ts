// Checkout through the real `stripe` SDK against our local payment fake
// (started here on a free port), the hosted Pay page, the signed webhook it
// sends, signature checks with the SDK's own verifier, and replay detection.
import { createServer, type Server } from "node:http";
import type { AddressInfo } from "node:net";
import { randomUUID } from "node:crypto";
import knex, { type Knex } from "knex";
import Stripe from "stripe";
import { afterAll, beforeAll, beforeEach, describe, expect, it } from "vitest";
import { DEFAULT_WEBHOOK_SECRET, parseFormBody, startPaymentsFake, type PaymentsFake } from "../../scripts/fakes/payments.ts";
import { createCheckoutSession, createPaymentsClient, recordEventOnce, verifyWebhook } from "../../app/lib/payments/payments.server.ts";

interface Received {
  body: string;
  signature: string | undefined;
}

let db: Knex;
let fake: PaymentsFake;
let receiver: Server;
let received: Received[] = [];
let client: Stripe;
const ownEventIds: string[] = [];
const localEnv = { NODE_ENV: "test" };

beforeAll(async () => {
  db = knex({ client: "pg", connection: process.env.DATABASE_URL ?? "postgres://postgres@127.0.0.1:54329/tidemark_test", pool: { min: 0, max: 4 } });
  expect(await db.schema.hasTable("payment_events"), "run `npx tsx scripts/migrate.ts` first").toBe(true);
  // Stands in for the app's webhook route: keeps the raw bytes and the signature header.
  receiver = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on("data", (c: Buffer) => chunks.push(c));
    req.on("end", () => {
      received.push({ body: Buffer.concat(chunks).toString("utf8"), signature: req.headers["stripe-signature"] as string | undefined });
      res.writeHead(200, { "content-type": "application/json" });
      res.end('{"received":true}');
    });
  });
  await new Promise<void>((resolve) => receiver.listen(0, "127.0.0.1", resolve));
  fake = await startPaymentsFake({ port: 0, webhookSecret: DEFAULT_WEBHOOK_SECRET, webhookUrl: "http://127.0.0.1:9/unused" });
  const config = await fetch(`${fake.url}/_fake/config`, {
    method: "POST",
    headers: { "content-type": "application/json" },
    body: JSON.stringify({ webhookUrl: `http://127.0.0.1:${(receiver.address() as AddressInfo).port}/api/payments/webhook` }),
  });
  expect(config.status).toBe(200);
  client = createPaymentsClient({ ...localEnv, STRIPE_API_HOST: "127.0.0.1", STRIPE_API_PORT: String(fake.port), STRIPE_API_PROTOCOL: "http" });
});

beforeEach(() => {
  received = [];
});

afterAll(async () => {
  if (db && ownEventIds.length) await db("payment_events").whereIn("event_id", ownEventIds).delete();
  await fake?.close();
  await new Promise<void>((resolve) => (receiver ? receiver.close(() => resolve()) : resolve()));
  await db?.destroy();
});

function checkoutInput(invoiceId = randomUUID()) {
  return {
    invoiceId,
    amountCents: 48_050,
    currency: "EUR",
    description: "Mastering of “Low Tide Lights” (5 tracks)",
    successUrl: "http://127.0.0.1:3100/invoices/paid?session={CHECKOUT_SESSION_ID}",
    cancelUrl: "http://127.0.0.1:3100/invoices/cancelled",
    customerEmail: "mara.quill@example.test",
  };
}

async function pay(sessionUrl: string) {
  const res = await fetch(`${sessionUrl}/confirm`, { method: "POST", redirect: "manual" });
  await res.arrayBuffer();
  return res;
}

describe("the fake's form decoding", () => {
  it("reads the SDK's bracket notation into objects and arrays", () => {
    const p = parseFormBody("mode=payment&line_items[0][quantity]=1&line_items[0][price_data][currency]=eur&line_items[1][quantity]=2&metadata[invoice_id]=x%26y");
    expect(p).toEqual({
      mode: "payment",
      line_items: [{ quantity: "1", price_data: { currency: "eur" } }, { quantity: "2" }],
      metadata: { invoice_id: "x&y" },
    });
  });
});

describe("checkout through the SDK", () => {
  it("creates a session whose details the SDK reads back", async () => {
    const input = checkoutInput();
    const created = await createCheckoutSession(input, client);
    expect(created.id).toMatch(/^cs_test_[0-9a-f]{32}$/);
    expect(created.url).toBe(`${fake.url}/pay/${created.id}`);

    const session = await client.checkout.sessions.retrieve(created.id);
    expect(session).toMatchObject({
      id: created.id,
      object: "checkout.session",
      mode: "payment",
      status: "open",
      payment_status: "unpaid",
      amount_total: 48_050,
      currency: "eur",
      client_reference_id: input.invoiceId,
      customer_email: "mara.quill@example.test",
      metadata: { invoice_id: input.invoiceId },
      success_url: input.successUrl,
      cancel_url: input.cancelUrl,
    });
    const items = await client.checkout.sessions.listLineItems(created.id);
    expect(items.data).toHaveLength(1);
    expect(items.data[0]).toMatchObject({ description: input.description, quantity: 1, amount_total: 48_050 });
  });

  it("refuses bad input before calling out, and the fake refuses what the provider would", async () => {
    await expect(createCheckoutSession({ ...checkoutInput(), amountCents: 0 }, client)).rejects.toThrow();
    await expect(createCheckoutSession({ ...checkoutInput(), successUrl: "javascript:alert(1)" }, client)).rejects.toThrow();
    const missing = await client.checkout.sessions
      .create({ mode: "payment", line_items: [{ quantity: 1, price_data: { currency: "eur", unit_amount: 100, product_data: { name: "x" } } }] })
      .catch((e: unknown) => e);
    expect(missing).toBeInstanceOf(Stripe.errors.StripeInvalidRequestError);
    expect((missing as Stripe.errors.StripeInvalidRequestError).param).toBe("success_url");
    const unknown = await client.checkout.sessions.retrieve("cs_test_nothing").catch((e: unknown) => e);
    expect((unknown as Stripe.errors.StripeError).statusCode).toBe(404);
  });

  it("gives the same session back for a repeated idempotency key", async () => {
    const params: Stripe.Checkout.SessionCreateParams = {
      mode: "payment",
      success_url: "http://127.0.0.1:3100/ok",
      line_items: [{ quantity: 2, price_data: { currency: "eur", unit_amount: 1_500, product_data: { name: "Stem mastering" } } }],
    };
    const key = randomUUID();
    const a = await client.checkout.sessions.create(params, { idempotencyKey: key });
    const b = await client.checkout.sessions.create(params, { idempotencyKey: key });
    const c = await client.checkout.sessions.create(params, { idempotencyKey: randomUUID() });
    expect(b.id).toBe(a.id);
    expect(c.id).not.toBe(a.id);
    expect(a.amount_total).toBe(3_000);
  });

  it("answers a wrong API key with an authentication error", async () => {
    const basic = await fetch(`${fake.url}/v1/checkout/sessions/cs_test_x`, { headers: { authorization: `Basic ${Buffer.from("sk_test_tidemark_local:").toString("base64")}` } });
    expect(basic.status).toBe(404);
    const none = await fetch(`${fake.url}/v1/checkout/sessions/cs_test_x`);
    expect(none.status).toBe(401);
    const stranger = createPaymentsClient({ ...localEnv, STRIPE_SECRET_KEY: "not-a-key", STRIPE_API_HOST: "127.0.0.1", STRIPE_API_PORT: String(fake.port), STRIPE_API_PROTOCOL: "http" });
    await expect(stranger.checkout.sessions.retrieve("cs_test_x")).rejects.toBeInstanceOf(Stripe.errors.StripeAuthenticationError);
  });
});

describe("the hosted page, the webhook and its signature", () => {
  it("shows the amount with Pay and Cancel; Pay sends a signed event, then goes to success_url", async () => {
    const input = checkoutInput();
    const { id, url } = await createCheckoutSession(input, client);

    const page = await fetch(url);
    expect(page.status).toBe(200);
    const html = await page.text();
    expect(html).toContain("€480.50");
    expect(html).toContain(`action="/pay/${id}/confirm"`);
    expect(html).toContain(`action="/pay/${id}/cancel"`);
    expect(html).toMatch(/>Pay €480\.50</);
    expect(html).toMatch(/>Cancel</);

    const res = await pay(url);
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(`http://127.0.0.1:3100/invoices/paid?session=${id}`);

    expect(received).toHaveLength(1);
    const [delivery] = received;
    const event = verifyWebhook(delivery!.body, delivery!.signature, localEnv);
    expect(event.id).toMatch(/^evt_[0-9a-f]{24}$/);
    expect(event.type).toBe("checkout.session.completed");
    const paid = event.data.object as Stripe.Checkout.Session;
    expect(paid).toMatchObject({ id, status: "complete", payment_status: "paid", amount_total: 48_050, client_reference_id: input.invoiceId, metadata: { invoice_id: input.invoiceId } });
    // The SDK's own verifier agrees, with the secret spelled out.
    expect(Stripe.webhooks.constructEvent(delivery!.body, delivery!.signature!, DEFAULT_WEBHOOK_SECRET).id).toBe(event.id);

    expect(await client.checkout.sessions.retrieve(id)).toMatchObject({ status: "complete", payment_status: "paid" });
    const events = (await client.events.retrieve(event.id)) as Stripe.Event;
    expect(events.type).toBe("checkout.session.completed");

    // Paying again changes nothing: no second event, same destination.
    const again = await pay(url);
    expect(again.status).toBe(303);
    expect(received).toHaveLength(1);
    const afterPay = await fetch(url).then((r) => r.text());
    expect(afterPay).toContain("already made");
    expect(afterPay).not.toContain("/confirm");
  });

  it("Cancel goes back to cancel_url and leaves the session open and unpaid", async () => {
    const input = checkoutInput();
    const { id, url } = await createCheckoutSession(input, client);
    const res = await fetch(`${url}/cancel`, { method: "POST", redirect: "manual" });
    expect(res.status).toBe(303);
    expect(res.headers.get("location")).toBe(input.cancelUrl);
    expect(received).toHaveLength(0);
    expect(await client.checkout.sessions.retrieve(id)).toMatchObject({ status: "open", payment_status: "unpaid" });
  });

  it("rejects a tampered body, a wrong secret, a missing header and a stale timestamp", async () => {
    const { url } = await createCheckoutSession(checkoutInput(), client);
    await pay(url);
    const { body, signature } = received[0]!;
    expect(() => verifyWebhook(body, signature, localEnv)).not.toThrow();

    const tampered = body.replace('"amount_total": 48050', '"amount_total": 1');
    expect(tampered).not.toBe(body);
    expect(() => verifyWebhook(tampered, signature, localEnv)).toThrow(Stripe.errors.StripeSignatureVerificationError);
    expect(() => verifyWebhook(body, signature, { ...localEnv, STRIPE_WEBHOOK_SECRET: "whsec_someone_else" })).toThrow(Stripe.errors.StripeSignatureVerificationError);
    expect(() => verifyWebhook(body, undefined, localEnv)).toThrow(/missing/);
    expect(() => verifyWebhook(body, "t=1,v1=00", localEnv)).toThrow(Stripe.errors.StripeSignatureVerificationError);
    const stale = Stripe.webhooks.generateTestHeaderString({ payload: body, secret: DEFAULT_WEBHOOK_SECRET, timestamp: Math.floor(Date.now() / 1000) - 3600 });
    expect(() => verifyWebhook(body, stale, localEnv)).toThrow(/tolerance/i);
    const fresh = Stripe.webhooks.generateTestHeaderString({ payload: body, secret: DEFAULT_WEBHOOK_SECRET });
    expect(verifyWebhook(body, fresh, localEnv).type).toBe("checkout.session.completed");
  });
});

describe("replayed events", () => {
  it("records a redelivered event id once", async () => {
    const { url } = await createCheckoutSession(checkoutInput(), client);
    await pay(url);
    const first = verifyWebhook(received[0]!.body, received[0]!.signature, localEnv);
    ownEventIds.push(first.id);
    expect(await recordEventOnce(db, first)).toBe(true);

    const resend = await fetch(`${fake.url}/_fake/events/${first.id}/resend`, { method: "POST" });
    expect(resend.status).toBe(200);
    expect(received).toHaveLength(2);
    const replay = verifyWebhook(received[1]!.body, received[1]!.signature, localEnv);
    expect(replay.id).toBe(first.id);
    expect(await recordEventOnce(db, replay)).toBe(false);

    const rows = await db("payment_events").where({ event_id: first.id });
    expect(rows).toHaveLength(1);
    expect(rows[0]).toMatchObject({ type: "checkout.session.completed" });
    expect(rows[0].payload.data.object.payment_status).toBe("paid");
  });

  it("lets exactly one of two simultaneous deliveries through", async () => {
    const event = { id: `evt_local_${randomUUID().replaceAll("-", "")}`, type: "checkout.session.completed" };
    ownEventIds.push(event.id);
    const results = await Promise.all([recordEventOnce(db, event), recordEventOnce(db, event), recordEventOnce(db, event)]);
    expect(results.filter(Boolean)).toHaveLength(1);
  });

  it("commits nothing when the transaction that applies the event rolls back", async () => {
    const event = { id: `evt_local_${randomUUID().replaceAll("-", "")}`, type: "checkout.session.completed" };
    ownEventIds.push(event.id);
    await expect(
      db.transaction(async (trx) => {
        expect(await recordEventOnce(trx, event)).toBe(true);
        throw new Error("applying the event failed");
      }),
    ).rejects.toThrow("applying the event failed");
    // The provider will redeliver; the event must still count as new.
    expect(await recordEventOnce(db, event)).toBe(true);
  });
});

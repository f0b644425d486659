// Online payment of invoices through the payment provider's SDK (Checkout).
// Environment:
//   STRIPE_SECRET_KEY       API key (development and tests default to a local test key)
//   STRIPE_WEBHOOK_SECRET   secret the webhook signatures are made with (same defaults)
//   STRIPE_API_HOST/PORT/PROTOCOL  point the SDK at the local fake in development and tests
import Stripe from "stripe";
import type { Knex } from "knex";
import { z } from "zod";

type Env = Record<string, string | undefined>;

const LOCAL_SECRET_KEY = "sk_test_tidemark_local";
const LOCAL_WEBHOOK_SECRET = "whsec_tidemark_local_fake";

function setting(env: Env, name: string, localDefault: string): string {
  const value = env[name];
  if (value) return value;
  if (env.NODE_ENV === "production") throw new Error(`${name} must be set in production`);
  return localDefault;
}

export function createPaymentsClient(env: Env = process.env): Stripe {
  const protocol = env.STRIPE_API_PROTOCOL;
  if (protocol !== undefined && protocol !== "http" && protocol !== "https") throw new Error(`STRIPE_API_PROTOCOL must be http or https, not ${protocol}`);
  return new Stripe(setting(env, "STRIPE_SECRET_KEY", LOCAL_SECRET_KEY), {
    ...(env.STRIPE_API_HOST ? { host: env.STRIPE_API_HOST } : {}),
    ...(env.STRIPE_API_PORT ? { port: Number(env.STRIPE_API_PORT) } : {}),
    ...(protocol ? { protocol } : {}),
    maxNetworkRetries: 2,
    timeout: 20_000,
    telemetry: false,
    appInfo: { name: "Tidemark" },
  });
}

let shared: Stripe | null = null;

/** The process's one client, made on first use so importing this module needs no environment. */
export function getPaymentsClient(): Stripe {
  shared ??= createPaymentsClient();
  return shared;
}

const checkoutSchema = z.object({
  invoiceId: z.uuid(),
  amountCents: z.number().int().positive(),
  currency: z.string().regex(/^[a-zA-Z]{3}$/).transform((c) => c.toLowerCase()),
  description: z.string().trim().min(1).max(250),
  successUrl: z.url({ protocol: /^https?$/ }),
  cancelUrl: z.url({ protocol: /^https?$/ }),
  customerEmail: z.email().nullish(),
});

export type CheckoutInput = z.input<typeof checkoutSchema>;

/**
 * Opens a hosted payment page for one invoice. The invoice id travels as
 * client_reference_id and metadata, so the completed-payment event names it.
 * successUrl may contain {CHECKOUT_SESSION_ID}, which the provider fills in.
 */
export async function createCheckoutSession(input: CheckoutInput, client: Stripe = getPaymentsClient()): Promise<{ id: string; url: string }> {
  const p = checkoutSchema.parse(input);
  const session = await client.checkout.sessions.create({
    mode: "payment",
    line_items: [
      { quantity: 1, price_data: { currency: p.currency, unit_amount: p.amountCents, product_data: { name: p.description } } },
    ],
    success_url: p.successUrl,
    cancel_url: p.cancelUrl,
    client_reference_id: p.invoiceId,
    metadata: { invoice_id: p.invoiceId },
    ...(p.customerEmail ? { customer_email: p.customerEmail } : {}),
  });
  if (!session.url) throw new Error(`checkout session ${session.id} came back without a payment page`);
  return { id: session.id, url: session.url };
}

/**
 * Checks a webhook's Stripe-Signature header against the raw request body
 * (the exact bytes; a re-serialised JSON would not match) and returns the
 * event. Throws when the signature is missing, wrong or too old.
 */
export function verifyWebhook(rawBody: string | Buffer, signatureHeader: string | null | undefined, env: Env = process.env): Stripe.Event {
  if (!signatureHeader) throw new Error("missing Stripe-Signature header");
  const secret = setting(env, "STRIPE_WEBHOOK_SECRET", LOCAL_WEBHOOK_SECRET);
  // The signature check needs no API key, so the SDK's static helper is enough.
  return Stripe.webhooks.constructEvent(rawBody, signatureHeader, secret);
}

/**
 * Records an event as handled. Returns true the first time an event id is
 * seen and false for a replay. Call it inside the transaction that applies the
 * event, so "recorded" and "applied" commit together.
 */
export async function recordEventOnce(db: Knex | Knex.Transaction, event: { id: string; type: string }): Promise<boolean> {
  const rows = await db("payment_events")
    .insert({ event_id: event.id, type: event.type, payload: JSON.stringify(event) })
    .onConflict("event_id")
    .ignore()
    .returning<{ id: string }[]>("id");
  return rows.length === 1;
}

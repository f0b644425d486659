// A local payment provider for development and tests. It answers the Checkout
// calls the `stripe` SDK makes (form-encoded requests, JSON answers), serves a
// hosted payment page of our own, and on "Pay" marks the session paid, sends a
// signed `checkout.session.completed` event to the configured webhook URL and
// sends the browser on to the session's success_url.
//   POST /v1/checkout/sessions              create (mode=payment, line_items with price_data)
//   GET  /v1/checkout/sessions/:id          retrieve
//   GET  /v1/checkout/sessions/:id/line_items
//   POST /v1/checkout/sessions/:id/expire
//   GET  /v1/events/:id                     retrieve an event sent earlier
//   GET  /pay/:id                           the hosted page; its forms post to
//   POST /pay/:id/confirm | /pay/:id/cancel
//   POST /_fake/config {webhookUrl}         point the webhooks elsewhere (tests)
//   GET  /_fake/events                      events with their delivery results
//   POST /_fake/events/:id/resend           deliver an event again (replays)
// Run as a script: FAKE_PORT, FAKE_MODE, FAKE_PAYMENTS_WEBHOOK_URL, STRIPE_WEBHOOK_SECRET.
import { createHmac, randomBytes } from "node:crypto";
import { createServer, type IncomingMessage, type ServerResponse } from "node:http";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";

export const DEFAULT_WEBHOOK_SECRET = "whsec_tidemark_local_fake";

export interface PaymentsFakeOptions {
  /** 0 picks a free port. */
  port?: number;
  host?: string;
  webhookUrl?: string;
  webhookSecret?: string;
  /** Where failed webhook deliveries are reported (the script prints them). */
  log?: (line: string) => void;
}

export interface PaymentsFake {
  port: number;
  url: string;
  setWebhookUrl(url: string): void;
  close(): Promise<void>;
}

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };
type Params = { [key: string]: Json };

interface LineItem {
  id: string;
  object: "item";
  description: string;
  quantity: number;
  currency: string;
  amount_subtotal: number;
  amount_total: number;
  price: { object: "price"; currency: string; unit_amount: number; product_name: string };
}

interface Session {
  id: string;
  object: "checkout.session";
  mode: string;
  status: "open" | "complete" | "expired";
  payment_status: "unpaid" | "paid";
  amount_subtotal: number;
  amount_total: number;
  currency: string;
  url: string | null;
  success_url: string;
  cancel_url: string | null;
  client_reference_id: string | null;
  customer_email: string | null;
  customer_details: { email: string | null } | null;
  metadata: { [key: string]: string };
  payment_intent: string | null;
  created: number;
  expires_at: number;
  livemode: false;
}

interface FakeEvent {
  id: string;
  object: "event";
  api_version: string;
  created: number;
  type: string;
  livemode: false;
  pending_webhooks: number;
  request: { id: null; idempotency_key: null };
  data: { object: Session };
}

interface Delivery {
  at: string;
  url: string;
  status: number | null;
  error: string | null;
}

function newId(prefix: string) {
  return `${prefix}_${randomBytes(12).toString("hex")}`;
}

const nowSeconds = () => Math.floor(Date.now() / 1000);

/** Decodes the SDK's bracket notation (`line_items[0][price_data][currency]=eur`) into objects and arrays. */
export function parseFormBody(body: string): Params {
  const root: Params = {};
  for (const [key, value] of new URLSearchParams(body)) {
    const parts = key.split(/\[|\]\[|\]/).filter((p, i) => i === 0 || p !== "");
    let node: { [key: string]: Json } = root;
    parts.forEach((part, i) => {
      if (i === parts.length - 1) {
        node[part] = value;
      } else {
        if (typeof node[part] !== "object" || node[part] === null) node[part] = {};
        node = node[part] as { [key: string]: Json };
      }
    });
  }
  const arrays = (value: Json): Json => {
    if (value === null || typeof value !== "object" || Array.isArray(value)) return value;
    const keys = Object.keys(value);
    const entries = keys.map((k) => [k, arrays(value[k]!)] as const);
    if (keys.length > 0 && keys.every((k) => /^\d+$/.test(k))) {
      return entries.sort((a, b) => Number(a[0]) - Number(b[0])).map(([, v]) => v);
    }
    return Object.fromEntries(entries);
  };
  return arrays(root) as Params;
}

/** The provider's signature header: t=<unix seconds>,v1=<hex HMAC-SHA256 of "t.payload">. */
export function signPayload(payload: string, secret: string, timestamp = nowSeconds()) {
  const v1 = createHmac("sha256", secret).update(`${timestamp}.${payload}`, "utf8").digest("hex");
  return `t=${timestamp},v1=${v1}`;
}

class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly param?: string,
    readonly code = status === 404 ? "resource_missing" : "parameter_invalid",
  ) {
    super(message);
  }
}

function readBody(req: IncomingMessage, limitBytes = 1024 * 1024): Promise<string> {
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = [];
    let size = 0;
    req.on("data", (chunk: Buffer) => {
      size += chunk.length;
      if (size > limitBytes) reject(new ApiError(413, "request too large"));
      else chunks.push(chunk);
    });
    req.on("end", () => resolve(Buffer.concat(chunks).toString("utf8")));
    req.on("error", reject);
  });
}

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" })[c]!);

function formatAmount(cents: number, currency: string) {
  try {
    return new Intl.NumberFormat("en", { style: "currency", currency: currency.toUpperCase() }).format(cents / 100);
  } catch {
    return `${(cents / 100).toFixed(2)} ${currency.toUpperCase()}`;
  }
}

function payPage(session: Session, items: LineItem[]) {
  const rows = items
    .map((i) => `<tr><td>${escapeHtml(i.description)} × ${i.quantity}</td><td class="n">${escapeHtml(formatAmount(i.amount_total, i.currency))}</td></tr>`)
    .join("");
  const open = session.status === "open";
  const state = open
    ? `<form method="post" action="/pay/${session.id}/confirm"><button class="pay" type="submit">Pay ${escapeHtml(formatAmount(session.amount_total, session.currency))}</button></form>
       <form method="post" action="/pay/${session.id}/cancel"><button class="cancel" type="submit">Cancel</button></form>`
    : `<p class="state">This payment is ${session.status === "complete" ? "already made" : "no longer open"}.</p>`;
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Local test payment</title>
<meta name="viewport" content="width=device-width, initial-scale=1">
<style>
  body { margin: 0; background: #f4f1ea; color: #1f1d1a; font: 16px/1.5 system-ui, sans-serif; }
  main { max-width: 26rem; margin: 4rem auto; padding: 2rem; background: #fffdf8; border: 1px solid #d8d2c4; }
  h1 { font-size: 1.1rem; margin: 0 0 .25rem; } .note { color: #6b655b; font-size: .85rem; margin: 0 0 1.5rem; }
  table { width: 100%; border-collapse: collapse; margin-bottom: 1.5rem; } td { padding: .4rem 0; border-bottom: 1px solid #e6e0d3; }
  .n { text-align: right; font-family: ui-monospace, monospace; }
  form { display: inline; } button { font: inherit; padding: .6rem 1.2rem; border: 1px solid #1f1d1a; cursor: pointer; margin-right: .5rem; }
  .pay { background: #1d5c63; border-color: #1d5c63; color: #fffdf8; } .cancel { background: transparent; color: #1f1d1a; }
</style></head>
<body><main>
  <h1>Local test payment</h1>
  <p class="note">No money moves here: this page stands in for the payment provider on this machine.${session.customer_email ? ` Paying as ${escapeHtml(session.customer_email)}.` : ""}</p>
  <table>${rows}<tr><td><strong>Total</strong></td><td class="n"><strong>${escapeHtml(formatAmount(session.amount_total, session.currency))}</strong></td></tr></table>
  ${state}
</main></body></html>`;
}

export async function startPaymentsFake(options: PaymentsFakeOptions = {}): Promise<PaymentsFake> {
  const host = options.host ?? "127.0.0.1";
  const secret = options.webhookSecret ?? DEFAULT_WEBHOOK_SECRET;
  let webhookUrl = options.webhookUrl ?? "http://127.0.0.1:3000/api/payments/webhook";
  let baseUrl = "";
  const log = options.log ?? (() => {});

  const sessions = new Map<string, Session>();
  const lineItems = new Map<string, LineItem[]>();
  const events = new Map<string, { event: FakeEvent; deliveries: Delivery[] }>();
  // The SDK sends an Idempotency-Key with every POST so its own retries do not create twins.
  const idempotent = new Map<string, { status: number; body: string }>();

  function createSession(p: Params): Session {
    const str = (name: string, required = false) => {
      const v = p[name];
      if (v === undefined || v === "") {
        if (required) throw new ApiError(400, `Missing required param: ${name}.`, name);
        return null;
      }
      if (typeof v !== "string") throw new ApiError(400, `Invalid ${name}: must be a string`, name);
      return v;
    };
    const mode = str("mode", true)!;
    if (mode !== "payment") throw new ApiError(400, `This local fake only supports mode=payment, not ${mode}.`, "mode");
    const successUrl = str("success_url", true)!;
    const items = p.line_items;
    if (!Array.isArray(items) || items.length === 0) throw new ApiError(400, "Missing required param: line_items.", "line_items");
    const built: LineItem[] = items.map((raw, i) => {
      const item = raw as Params;
      const price = item.price_data as Params | undefined;
      if (!price) throw new ApiError(400, `line_items[${i}]: only price_data is supported by the local fake`, `line_items[${i}][price_data]`);
      const currency = String(price.currency ?? "").toLowerCase();
      if (!/^[a-z]{3}$/.test(currency)) throw new ApiError(400, "Invalid currency", `line_items[${i}][price_data][currency]`);
      const unitAmount = Number(price.unit_amount);
      if (!Number.isInteger(unitAmount) || unitAmount < 1) throw new ApiError(400, "Invalid integer: unit_amount", `line_items[${i}][price_data][unit_amount]`);
      const quantity = Number(item.quantity ?? 1);
      if (!Number.isInteger(quantity) || quantity < 1) throw new ApiError(400, "Invalid integer: quantity", `line_items[${i}][quantity]`);
      const name = String((price.product_data as Params | undefined)?.name ?? "");
      if (!name) throw new ApiError(400, "Missing required param: product_data[name].", `line_items[${i}][price_data][product_data][name]`);
      return {
        id: newId("li"),
        object: "item",
        description: name,
        quantity,
        currency,
        amount_subtotal: unitAmount * quantity,
        amount_total: unitAmount * quantity,
        price: { object: "price", currency, unit_amount: unitAmount, product_name: name },
      };
    });
    const currency = built[0]!.currency;
    if (built.some((i) => i.currency !== currency)) throw new ApiError(400, "All line items must share one currency.", "line_items");
    const total = built.reduce((sum, i) => sum + i.amount_total, 0);
    const metadata = (p.metadata ?? {}) as { [key: string]: string };
    if (typeof metadata !== "object" || Array.isArray(metadata)) throw new ApiError(400, "Invalid metadata", "metadata");
    const id = `cs_test_${randomBytes(16).toString("hex")}`;
    const created = nowSeconds();
    const session: Session = {
      id,
      object: "checkout.session",
      mode,
      status: "open",
      payment_status: "unpaid",
      amount_subtotal: total,
      amount_total: total,
      currency,
      url: `${baseUrl}/pay/${id}`,
      success_url: successUrl,
      cancel_url: str("cancel_url"),
      client_reference_id: str("client_reference_id"),
      customer_email: str("customer_email"),
      customer_details: null,
      metadata,
      payment_intent: null,
      created,
      expires_at: created + 24 * 3600,
      livemode: false,
    };
    sessions.set(id, session);
    lineItems.set(id, built);
    return session;
  }

  function getSession(id: string) {
    const session = sessions.get(id);
    if (!session) throw new ApiError(404, `No such checkout.session: '${id}'`, "id");
    if (session.status === "open" && session.expires_at < nowSeconds()) {
      session.status = "expired";
      session.url = null;
    }
    return session;
  }

  async function deliver(eventId: string): Promise<Delivery> {
    const entry = events.get(eventId)!;
    const payload = JSON.stringify(entry.event, null, 2);
    const delivery: Delivery = { at: new Date().toISOString(), url: webhookUrl, status: null, error: null };
    try {
      const res = await fetch(webhookUrl, {
        method: "POST",
        headers: { "content-type": "application/json; charset=utf-8", "stripe-signature": signPayload(payload, secret) },
        body: payload,
        signal: AbortSignal.timeout(10_000),
      });
      delivery.status = res.status;
      await res.arrayBuffer();
    } catch (error) {
      delivery.error = (error as Error).message;
    }
    entry.deliveries.push(delivery);
    entry.event.pending_webhooks = delivery.status !== null && delivery.status < 300 ? 0 : 1;
    return delivery;
  }

  /** A failed delivery is tried again a few times, later, as a hosted provider would. */
  function deliverWithRetries(eventId: string) {
    const delaysMs = [2_000, 10_000, 30_000];
    const attempt = async (i: number) => {
      const d = await deliver(eventId);
      const ok = d.status !== null && d.status < 300;
      if (!ok) log(`webhook ${eventId} to ${d.url} failed (${d.error ?? `HTTP ${d.status}`})${i < delaysMs.length ? "; will retry" : "; giving up"}`);
      if (!ok && i < delaysMs.length) setTimeout(() => void attempt(i + 1), delaysMs[i]).unref();
      return d;
    };
    return attempt(0);
  }

  async function complete(session: Session) {
    session.status = "complete";
    session.payment_status = "paid";
    session.payment_intent = newId("pi");
    session.customer_details = { email: session.customer_email };
    session.url = null;
    const event: FakeEvent = {
      id: newId("evt"),
      object: "event",
      api_version: "local-fake",
      created: nowSeconds(),
      type: "checkout.session.completed",
      livemode: false,
      pending_webhooks: 1,
      request: { id: null, idempotency_key: null },
      data: { object: structuredClone(session) },
    };
    events.set(event.id, { event, deliveries: [] });
    // The first attempt is awaited so that the success page, once reached, finds the payment recorded.
    await deliverWithRetries(event.id);
  }

  function sendJson(res: ServerResponse, status: number, body: unknown) {
    res.writeHead(status, { "content-type": "application/json; charset=utf-8", "request-id": newId("req") });
    res.end(JSON.stringify(body));
  }

  function redirect(res: ServerResponse, location: string) {
    res.writeHead(303, { location });
    res.end();
  }

  async function handleApi(req: IncomingMessage, res: ServerResponse, pathname: string, url: URL) {
    // The SDK sends "Bearer <key>"; curl -u sends the key as a Basic user name. Both are accepted.
    const auth = req.headers.authorization ?? "";
    const basic = /^Basic (\S+)$/.exec(auth);
    const key = basic ? Buffer.from(basic[1]!, "base64").toString("utf8").split(":")[0] : auth.replace(/^Bearer /, "");
    if (!/^sk_(test|live)_\S+$/.test(key ?? "")) {
      return sendJson(res, 401, { error: { type: "invalid_request_error", message: "Invalid API Key provided." } });
    }
    const idemKey = req.method === "POST" ? req.headers["idempotency-key"] : undefined;
    const cacheKey = typeof idemKey === "string" ? `${pathname} ${idemKey}` : null;
    if (cacheKey && idempotent.has(cacheKey)) {
      const cached = idempotent.get(cacheKey)!;
      res.writeHead(cached.status, { "content-type": "application/json; charset=utf-8", "idempotent-replayed": "true" });
      return res.end(cached.body);
    }
    let status = 200;
    let body: unknown;
    try {
      const params = req.method === "POST" ? parseFormBody(await readBody(req)) : parseFormBody(url.searchParams.toString());
      let m: RegExpExecArray | null;
      if (req.method === "POST" && pathname === "/v1/checkout/sessions") {
        body = createSession(params);
      } else if (req.method === "GET" && (m = /^\/v1\/checkout\/sessions\/([^/]+)$/.exec(pathname))) {
        body = getSession(m[1]!);
      } else if (req.method === "GET" && (m = /^\/v1\/checkout\/sessions\/([^/]+)\/line_items$/.exec(pathname))) {
        getSession(m[1]!);
        const data = lineItems.get(m[1]!) ?? [];
        body = { object: "list", data, has_more: false, url: pathname };
      } else if (req.method === "POST" && (m = /^\/v1\/checkout\/sessions\/([^/]+)\/expire$/.exec(pathname))) {
        const session = getSession(m[1]!);
        if (session.status !== "open") throw new ApiError(400, `Only open sessions can be expired; this one is ${session.status}.`, undefined, "session_not_open");
        session.status = "expired";
        session.url = null;
        body = session;
      } else if (req.method === "GET" && (m = /^\/v1\/events\/([^/]+)$/.exec(pathname))) {
        const entry = events.get(m[1]!);
        if (!entry) throw new ApiError(404, `No such event: '${m[1]}'`, "id");
        body = entry.event;
      } else {
        throw new ApiError(404, `Unrecognized request URL (${req.method}: ${pathname}). The local fake answers only Checkout calls.`, undefined, "unrecognized_url");
      }
    } catch (error) {
      if (!(error instanceof ApiError)) throw error;
      status = error.status;
      body = { error: { type: "invalid_request_error", message: error.message, param: error.param, code: error.code } };
    }
    const text = JSON.stringify(body);
    if (cacheKey) idempotent.set(cacheKey, { status, body: text });
    res.writeHead(status, { "content-type": "application/json; charset=utf-8", "request-id": newId("req") });
    res.end(text);
  }

  async function handle(req: IncomingMessage, res: ServerResponse) {
    const url = new URL(req.url ?? "/", baseUrl);
    const pathname = url.pathname;
    let m: RegExpExecArray | null;
    if (pathname.startsWith("/v1/")) return handleApi(req, res, pathname, url);

    if (req.method === "GET" && (m = /^\/pay\/([^/]+)$/.exec(pathname))) {
      const session = sessions.get(m[1]!);
      if (!session) {
        res.writeHead(404, { "content-type": "text/plain; charset=utf-8" });
        return res.end("No such payment.");
      }
      getSession(session.id);
      res.writeHead(200, { "content-type": "text/html; charset=utf-8" });
      return res.end(payPage(session, lineItems.get(session.id) ?? []));
    }
    if (req.method === "POST" && (m = /^\/pay\/([^/]+)\/(confirm|cancel)$/.exec(pathname))) {
      await readBody(req);
      const session = sessions.get(m[1]!);
      if (!session) {
        res.writeHead(404, { "content-type": "text/plain; charset=utf-8" });
        return res.end("No such payment.");
      }
      getSession(session.id);
      if (m[2] === "cancel") {
        return session.cancel_url ? redirect(res, session.cancel_url) : redirect(res, `/pay/${session.id}`);
      }
      if (session.status === "open") await complete(session);
      if (session.status !== "complete") return redirect(res, `/pay/${session.id}`);
      return redirect(res, session.success_url.replaceAll("{CHECKOUT_SESSION_ID}", session.id));
    }
    if (req.method === "POST" && pathname === "/_fake/config") {
      let config: { webhookUrl?: unknown };
      try {
        config = JSON.parse((await readBody(req)) || "{}");
      } catch {
        return sendJson(res, 400, { error: "body must be JSON" });
      }
      if (config.webhookUrl !== undefined) {
        if (typeof config.webhookUrl !== "string" || !/^https?:\/\//.test(config.webhookUrl)) {
          return sendJson(res, 400, { error: "webhookUrl must be an http(s) URL" });
        }
        webhookUrl = config.webhookUrl;
      }
      return sendJson(res, 200, { webhookUrl });
    }
    if (req.method === "GET" && pathname === "/_fake/events") {
      return sendJson(res, 200, [...events.values()]);
    }
    if (req.method === "POST" && (m = /^\/_fake\/events\/([^/]+)\/resend$/.exec(pathname))) {
      if (!events.has(m[1]!)) return sendJson(res, 404, { error: "no such event" });
      return sendJson(res, 200, await deliver(m[1]!));
    }
    res.writeHead(404, { "content-type": "text/plain; charset=utf-8" });
    res.end("Not found.");
  }

  const server = createServer((req, res) => {
    handle(req, res).catch((error: Error) => {
      if (!res.headersSent) sendJson(res, error instanceof ApiError ? error.status : 500, { error: { type: "api_error", message: error.message } });
      else res.end();
    });
  });
  await new Promise<void>((resolve, reject) => {
    server.once("error", reject);
    server.listen(options.port ?? 0, host, () => resolve());
  });
  const port = (server.address() as AddressInfo).port;
  baseUrl = `http://${host}:${port}`;

  return {
    port,
    url: baseUrl,
    setWebhookUrl(url: string) {
      webhookUrl = url;
    },
    async close() {
      server.closeAllConnections();
      await new Promise<void>((resolve) => server.close(() => resolve()));
    },
  };
}

const isScript = process.argv[1] !== undefined && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url);
if (isScript) {
  const mode = process.env.FAKE_MODE ?? "dev";
  const fake = await startPaymentsFake({
    port: Number(process.env.FAKE_PORT ?? 12111),
    webhookUrl:
      process.env.FAKE_PAYMENTS_WEBHOOK_URL ??
      `http://127.0.0.1:${mode === "test" ? 3100 : 3000}/api/payments/webhook`,
    webhookSecret: process.env.STRIPE_WEBHOOK_SECRET || DEFAULT_WEBHOOK_SECRET,
    log: (line) => console.error(`[fake payments] ${line}`),
  });
  console.log(`[fake payments] ready on ${fake.url}`);
  const stop = () => void fake.close().then(() => process.exit(0));
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

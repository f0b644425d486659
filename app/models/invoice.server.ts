// Invoices of releases: built from the studio's rates as a draft, sent (which
// numbers it and queues the e-mail), paid online through Checkout, or voided.
// Payment itself is applied by the webhook (app/lib/billing/payment-events.server.ts).
import type { InvoiceErrorCode } from "../lib/billing/invoice-errors.ts";
import type { Knex } from "knex";
import type Stripe from "stripe";
import { db } from "../lib/db.server.ts";
import { buildInvoiceLines, totalCents, type TrackForBilling } from "../lib/billing/invoice-lines.ts";
import { assertMove, type InvoiceState } from "../lib/billing/invoice-state.ts";
import { publicAppUrl, releaseInvoiceLink } from "../lib/billing/links.ts";
import { queueEmail } from "../lib/mail/mailer.server.ts";
import { invoiceSentEmail } from "../lib/mail/templates.server.ts";
import { createCheckoutSession, getPaymentsClient } from "../lib/payments/payments.server.ts";
import { getStudioSettings, takeInvoiceNumber } from "./studio-settings.server.ts";

type Conn = Knex | Knex.Transaction;

export type InvoiceLine = {
  id: string;
  position: number;
  kind: "track" | "revision" | "other";
  trackId: string | null;
  description: string;
  quantity: number;
  unitCents: number;
  amountCents: number;
};

export type Invoice = {
  id: string;
  studioId: string;
  releaseId: string;
  number: string | null;
  currency: string;
  state: InvoiceState;
  totalCents: number;
  /** Every payment page opened for it, oldest first. */
  checkoutSessionIds: string[];
  sentAt: Date | null;
  paidAt: Date | null;
  voidedAt: Date | null;
  createdAt: Date;
  lines: InvoiceLine[];
};

export type InvoiceRow = {
  id: string;
  studio_id: string;
  release_id: string;
  number: string | null;
  currency: string;
  state: InvoiceState;
  total_cents: number;
  sent_at: Date | null;
  paid_at: Date | null;
  voided_at: Date | null;
  created_at: Date;
};

export class BillingError extends Error {
  constructor(
    message: string,
    /** What the page may say about it (app/lib/billing/invoice-errors.ts). */
    readonly code: InvoiceErrorCode = "refused",
  ) {
    super(message);
    this.name = "BillingError";
  }
}

async function withLines(conn: Conn, row: InvoiceRow): Promise<Invoice> {
  const lines = await conn("invoice_lines")
    .where({ invoice_id: row.id })
    .orderBy("position")
    .select("id", "position", "kind", "track_id as trackId", "description", "quantity", "unit_cents as unitCents", "amount_cents as amountCents");
  const sessions = await conn("invoice_checkout_sessions").where({ invoice_id: row.id }).orderBy("created_at").select<{ session_id: string }[]>("session_id");
  return {
    id: row.id,
    studioId: row.studio_id,
    releaseId: row.release_id,
    number: row.number,
    currency: row.currency,
    state: row.state,
    totalCents: row.total_cents,
    checkoutSessionIds: sessions.map((s) => s.session_id),
    sentAt: row.sent_at,
    paidAt: row.paid_at,
    voidedAt: row.voided_at,
    createdAt: row.created_at,
    lines,
  };
}

export async function getInvoice(id: string, conn: Conn = db): Promise<Invoice | undefined> {
  const row = await conn<InvoiceRow>("invoices").where({ id }).first();
  return row ? withLines(conn, row) : undefined;
}

/** The release's invoice that is not void, if any. */
export async function getInvoiceForRelease(releaseId: string, conn: Conn = db): Promise<Invoice | undefined> {
  const row = await conn<InvoiceRow>("invoices").where({ release_id: releaseId }).whereNot({ state: "void" }).first();
  return row ? withLines(conn, row) : undefined;
}

/** Tracks of a release with the number of distinct chain revisions that have a finished print. */
export async function tracksForBilling(releaseId: string, conn: Conn = db): Promise<TrackForBilling[]> {
  const rows = await conn("tracks as t")
    .leftJoin("mixes as m", "m.track_id", "t.id")
    .leftJoin("renders as r", function () {
      this.on("r.mix_id", "m.id").andOnVal("r.kind", "print").andOnVal("r.state", "done");
    })
    .where("t.release_id", releaseId)
    .groupBy("t.id", "t.position", "t.title")
    .orderBy("t.position")
    .select("t.id as trackId", "t.position", "t.title", conn.raw(`count(DISTINCT r.chain_revision_id)::int AS "printedRevisions"`));
  return rows as TrackForBilling[];
}

/**
 * Builds (or rebuilds, while it is a draft) the release's invoice from the
 * studio's current rates. A sent or paid invoice is left alone.
 */
export async function buildInvoice(releaseId: string, conn: Knex = db): Promise<Invoice> {
  return conn.transaction(async (trx) => {
    const release = await trx("releases").where({ id: releaseId }).forUpdate().first<{ id: string; studio_id: string } | undefined>("id", "studio_id");
    if (!release) throw new BillingError("no such release", "no-invoice");
    const existing = await trx<InvoiceRow>("invoices").where({ release_id: releaseId }).whereNot({ state: "void" }).forUpdate().first();
    if (existing && existing.state !== "draft") throw new BillingError(`the release's invoice is already ${existing.state}; void it to bill again`, "already-billed");
    const tracks = await tracksForBilling(releaseId, trx);
    if (tracks.length === 0) throw new BillingError("a release without tracks has nothing to bill", "no-tracks");
    const settings = await getStudioSettings(release.studio_id, trx);
    const lines = buildInvoiceLines(tracks, { trackRateCents: settings.trackRateCents, revisionRateCents: settings.revisionRateCents });
    const values = { currency: settings.currency, total_cents: totalCents(lines), updated_at: trx.fn.now() };
    let invoiceId: string;
    if (existing) {
      invoiceId = existing.id;
      await trx("invoices").where({ id: invoiceId }).update(values);
      await trx("invoice_lines").where({ invoice_id: invoiceId }).delete();
    } else {
      const [row] = await trx("invoices").insert({ ...values, studio_id: release.studio_id, release_id: releaseId }).returning<{ id: string }[]>("id");
      invoiceId = row!.id;
    }
    await trx("invoice_lines").insert(
      lines.map((l) => ({
        invoice_id: invoiceId,
        position: l.position,
        kind: l.kind,
        track_id: l.trackId,
        description: l.description,
        quantity: l.quantity,
        unit_cents: l.unitCents,
        amount_cents: l.amountCents,
      })),
    );
    return (await getInvoice(invoiceId, trx))!;
  });
}

/** The client's members (the people who receive invoices and receipts of a release). */
export async function billingRecipients(releaseId: string, conn: Conn = db): Promise<{ userId: string; email: string }[]> {
  return conn("releases as r")
    .join("memberships as m", function () {
      this.on("m.client_id", "r.client_id").andOn("m.studio_id", "r.studio_id");
    })
    .join("users as u", "u.id", "m.user_id")
    .where("r.id", releaseId)
    .andWhere("m.role", "client")
    .orderBy("u.email")
    .select("u.id as userId", "u.email");
}

async function releaseAndStudio(conn: Conn, releaseId: string) {
  return conn("releases as r")
    .join("studios as s", "s.id", "r.studio_id")
    .where("r.id", releaseId)
    .first<{ releaseTitle: string; studioName: string }>("r.title as releaseTitle", "s.name as studioName");
}

/** Numbers the draft, marks it sent and queues the invoice e-mail to the client's members, in one transaction. */
export async function sendInvoice(invoiceId: string, options: { appUrl?: string } = {}, conn: Knex = db): Promise<Invoice> {
  const appUrl = options.appUrl ?? publicAppUrl();
  return conn.transaction(async (trx) => {
    const row = await trx<InvoiceRow>("invoices").where({ id: invoiceId }).forUpdate().first();
    if (!row) throw new BillingError("no such invoice", "no-invoice");
    assertMove(row.state, "sent");
    if (row.total_cents <= 0) throw new BillingError("an invoice of nothing cannot be sent; set the studio's rates first", "nothing-to-send");
    const recipients = await billingRecipients(row.release_id, trx);
    if (recipients.length === 0) throw new BillingError("the release's client has no member to send the invoice to", "no-recipient");
    const number = await takeInvoiceNumber(trx, row.studio_id);
    const [sent] = await trx("invoices")
      .where({ id: invoiceId })
      .update({ state: "sent", number, sent_at: trx.fn.now(), updated_at: trx.fn.now() })
      .returning<InvoiceRow[]>("*");
    const names = await releaseAndStudio(trx, row.release_id);
    const email = invoiceSentEmail({
      studioName: names!.studioName,
      releaseTitle: names!.releaseTitle,
      invoiceNumber: number,
      amountCents: row.total_cents,
      currency: row.currency,
      link: releaseInvoiceLink(appUrl, row.release_id),
    });
    for (const r of recipients) {
      await queueEmail(trx, { to: r.email, ...email, kind: "invoice-sent", studioId: row.studio_id, userId: r.userId, releaseId: row.release_id, invoiceId });
    }
    return withLines(trx, sent!);
  });
}

export async function voidInvoice(invoiceId: string, conn: Knex = db): Promise<Invoice> {
  return conn.transaction(async (trx) => {
    const row = await trx<InvoiceRow>("invoices").where({ id: invoiceId }).forUpdate().first();
    if (!row) throw new BillingError("no such invoice", "no-invoice");
    assertMove(row.state, "void");
    const [voided] = await trx("invoices")
      .where({ id: invoiceId })
      .update({ state: "void", voided_at: trx.fn.now(), updated_at: trx.fn.now() })
      .returning<InvoiceRow[]>("*");
    return withLines(trx, voided!);
  });
}

/**
 * Opens a hosted payment page for a sent invoice and records its session
 * beside the invoice's earlier ones (invoice_checkout_sessions), so the
 * completed-payment event of any of them is matched to the invoice. The
 * newest page is offered again while it is open and asks the current amount;
 * otherwise a new one is opened.
 */
export async function startCheckout(
  invoiceId: string,
  urls: { successUrl: string; cancelUrl: string },
  options: { client?: Stripe; customerEmail?: string | null } = {},
  conn: Knex = db,
): Promise<{ sessionId: string; url: string }> {
  const row = await conn<InvoiceRow>("invoices").where({ id: invoiceId }).first();
  if (!row) throw new BillingError("no such invoice", "no-invoice");
  if (row.state !== "sent") throw new BillingError(`only a sent invoice can be paid (this one is ${row.state})`, "not-payable");
  const client = options.client ?? getPaymentsClient();
  const newest = await conn("invoice_checkout_sessions").where({ invoice_id: invoiceId }).orderBy("created_at", "desc").first<{ session_id: string; amount_cents: number; currency: string } | undefined>();
  if (newest && newest.amount_cents === row.total_cents && newest.currency === row.currency) {
    const open = await client.checkout.sessions.retrieve(newest.session_id).catch(() => null);
    if (open && open.status === "open" && open.url && open.amount_total === row.total_cents) return { sessionId: open.id, url: open.url };
  }
  const names = await releaseAndStudio(conn, row.release_id);
  const session = await createCheckoutSession(
    {
      invoiceId,
      amountCents: row.total_cents,
      currency: row.currency,
      description: `Invoice ${row.number} from ${names!.studioName}: ${names!.releaseTitle}`.slice(0, 250),
      successUrl: urls.successUrl,
      cancelUrl: urls.cancelUrl,
      customerEmail: options.customerEmail ?? null,
    },
    client,
  );
  await conn.transaction(async (trx) => {
    const now = await trx<InvoiceRow>("invoices").where({ id: invoiceId }).forUpdate().first("state", "total_cents");
    if (now?.state !== "sent" || now.total_cents !== row.total_cents) throw new BillingError("the invoice changed while the payment page was being opened", "changed");
    await trx("invoice_checkout_sessions").insert({ session_id: session.id, invoice_id: invoiceId, amount_cents: row.total_cents, currency: row.currency });
  });
  return { sessionId: session.id, url: session.url };
}

/**
 * Once an invoice is paid, its other payment pages still open are expired at
 * the provider, so nobody pays twice. Best effort: a page that cannot be
 * expired (already complete or expired) is left as it is; a payment that
 * still lands is recorded by the webhook on its session row.
 */
export async function expireOtherCheckouts(invoiceId: string, paidSessionId: string, options: { client?: Stripe } = {}, conn: Conn = db): Promise<string[]> {
  const client = options.client ?? getPaymentsClient();
  const others = await conn("invoice_checkout_sessions").where({ invoice_id: invoiceId }).whereNull("paid_at").whereNot({ session_id: paidSessionId }).select<{ session_id: string }[]>("session_id");
  const expired: string[] = [];
  for (const { session_id } of others) {
    const done = await client.checkout.sessions.expire(session_id).then(
      () => true,
      () => false,
    );
    if (done) expired.push(session_id);
  }
  return expired;
}

/** Finals unlock once the release's invoice is paid. */
export async function isReleasePaid(releaseId: string, conn: Conn = db): Promise<boolean> {
  const row = await conn("invoices").where({ release_id: releaseId, state: "paid" }).first("id");
  return row !== undefined;
}

// Applies a verified payment event. In one transaction: the event is recorded
// (a replay stops here), then only a completed Checkout session that we
// opened (any of the invoice's sessions, invoice_checkout_sessions), paid, for
// exactly the invoice's amount and currency, marks its sent invoice paid and
// queues the receipt. A second paid session of an invoice already paid is
// recorded on its session row (to refund) and changes nothing else.
// Everything else is recorded and otherwise ignored: answering with an error
// would only make the provider send the same event again.
import type { Knex } from "knex";
import type Stripe from "stripe";
import { queueEmail } from "../mail/mailer.server.ts";
import { paymentReceiptEmail } from "../mail/templates.server.ts";
import { recordEventOnce } from "../payments/payments.server.ts";
import { billingRecipients, type InvoiceRow } from "../../models/invoice.server.ts";
import { publicAppUrl, releaseInvoiceLink } from "./links.ts";

export type PaymentEventOutcome =
  | { outcome: "paid"; invoiceId: string }
  | { outcome: "replay" | "ignored-type" | "unknown-session" | "not-paid" | "amount-mismatch" | "invoice-not-open" | "already-paid"; invoiceId?: string };

type EventLike = Pick<Stripe.Event, "id" | "type"> & { data: { object: unknown } };

export async function handlePaymentEvent(db: Knex, event: EventLike, options: { appUrl?: string } = {}): Promise<PaymentEventOutcome> {
  const appUrl = options.appUrl ?? publicAppUrl();
  return db.transaction(async (trx): Promise<PaymentEventOutcome> => {
    if (!(await recordEventOnce(trx, event))) return { outcome: "replay" };
    if (event.type !== "checkout.session.completed") return { outcome: "ignored-type" };
    const session = event.data.object as Partial<Stripe.Checkout.Session>;
    if (typeof session.id !== "string") return { outcome: "unknown-session" };
    const known = await trx("invoice_checkout_sessions").where({ session_id: session.id }).first<{ invoice_id: string; paid_at: Date | null } | undefined>("invoice_id", "paid_at");
    if (!known) return { outcome: "unknown-session" };
    // The invoice row is the lock: two sessions of one invoice paid at once are applied one after the other.
    const invoice = (await trx<InvoiceRow>("invoices").where({ id: known.invoice_id }).forUpdate().first())!;
    if (session.payment_status !== "paid") return { outcome: "not-paid", invoiceId: invoice.id };
    if (session.amount_total !== invoice.total_cents || session.currency?.toUpperCase() !== invoice.currency) {
      return { outcome: "amount-mismatch", invoiceId: invoice.id };
    }
    if (invoice.state === "paid") {
      // Paid through another session before: money came twice. Kept on this session for the studio to refund.
      if (!known.paid_at) await trx("invoice_checkout_sessions").where({ session_id: session.id }).update({ paid_at: trx.fn.now() });
      return { outcome: "already-paid", invoiceId: invoice.id };
    }
    if (invoice.state !== "sent") return { outcome: "invoice-not-open", invoiceId: invoice.id };
    await trx("invoice_checkout_sessions").where({ session_id: session.id }).update({ paid_at: trx.fn.now() });

    const [paid] = await trx("invoices")
      .where({ id: invoice.id })
      .update({ state: "paid", paid_at: trx.fn.now(), updated_at: trx.fn.now() })
      .returning<InvoiceRow[]>("*");
    const names = await trx("releases as r")
      .join("studios as s", "s.id", "r.studio_id")
      .where("r.id", invoice.release_id)
      .first<{ releaseTitle: string; studioName: string }>("r.title as releaseTitle", "s.name as studioName");
    const email = paymentReceiptEmail({
      studioName: names!.studioName,
      releaseTitle: names!.releaseTitle,
      invoiceNumber: paid!.number!,
      amountCents: paid!.total_cents,
      currency: paid!.currency,
      paidAt: paid!.paid_at!,
      link: releaseInvoiceLink(appUrl, invoice.release_id),
    });
    const recipients = await billingRecipients(invoice.release_id, trx);
    const payer = session.customer_details?.email ?? session.customer_email ?? null;
    const addresses = new Map(recipients.map((r) => [r.email.toLowerCase(), r as { userId: string | null; email: string }]));
    // Whoever paid gets the receipt too, even when they are not a member.
    if (payer && !addresses.has(payer.toLowerCase())) addresses.set(payer.toLowerCase(), { userId: null, email: payer });
    for (const r of addresses.values()) {
      await queueEmail(trx, { to: r.email, ...email, kind: "payment-receipt", studioId: invoice.studio_id, userId: r.userId, releaseId: invoice.release_id, invoiceId: invoice.id });
    }
    return { outcome: "paid", invoiceId: invoice.id };
  });
}

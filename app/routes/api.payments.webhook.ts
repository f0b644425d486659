// The payment provider's webhook: the raw body is checked against its
// signature (bad or missing: 400), then the event is applied once; a payment
// closes the invoice's other open payment pages. Any other
// outcome answers 200 so the provider stops sending it; a database failure
// throws (500) and the provider sends the event again later.
import { handlePaymentEvent } from "../lib/billing/payment-events.server.ts";
import { db } from "../lib/db.server.ts";
import { verifyWebhook } from "../lib/payments/payments.server.ts";
import { expireOtherCheckouts } from "../models/invoice.server.ts";

export async function action({ request }: { request: Request }) {
  if (request.method !== "POST") return new Response("Method Not Allowed", { status: 405, headers: { Allow: "POST" } });
  // The exact bytes: a re-serialised JSON body would not match the signature.
  const rawBody = await request.text();
  let event;
  try {
    event = verifyWebhook(rawBody, request.headers.get("Stripe-Signature"));
  } catch {
    return Response.json({ error: "signature not valid" }, { status: 400 });
  }
  const result = await handlePaymentEvent(db, event);
  if (result.outcome === "paid") {
    // The invoice's other payment pages are closed, so nobody pays it twice (best effort, after the commit).
    const sessionId = (event.data.object as { id?: string }).id!;
    await expireOtherCheckouts(result.invoiceId, sessionId).catch((error: Error) => console.warn(`[payments] closing the other payment pages of invoice ${result.invoiceId}: ${error.message}`));
  }
  if (result.outcome !== "paid" && result.outcome !== "replay" && result.outcome !== "ignored-type") {
    console.warn(`[payments] event ${event.id} (${event.type}) not applied: ${result.outcome}${result.invoiceId ? ` for invoice ${result.invoiceId}` : ""}`);
  }
  return Response.json({ received: true, outcome: result.outcome });
}

// POST /releases/:releaseId/invoice — the owner's invoice actions
// (intent = build | send | void), and anyone's "pay" (a client of the release
// or the owner) which opens the hosted payment page. Answers with a redirect;
// a refused step comes back as ?invoiceError=<code> on the release page,
// which says the sentence for that code (never text from the query string).
import { redirect } from "react-router";
import { requireReleaseAccess } from "../lib/auth.server.ts";
import { publicAppUrl } from "../lib/billing/links.ts";
import { InvoiceStateError } from "../lib/billing/invoice-state.ts";
import { notFound } from "../lib/http.server.ts";
import { BillingError, buildInvoice, getInvoiceForRelease, sendInvoice, startCheckout, voidInvoice } from "../models/invoice.server.ts";

const INTENTS = ["build", "send", "void", "pay"] as const;

export async function action({ request, params }: { request: Request; params: { releaseId?: string } }) {
  const { user, release } = await requireReleaseAccess(request, params.releaseId);
  const intent = String((await request.formData()).get("intent") ?? "");
  if (!(INTENTS as readonly string[]).includes(intent)) return new Response("Unknown intent", { status: 400 });
  // Invoices are the owner's and the client's business: an engineer may not even open the payment page.
  if (intent === "pay" ? user.role === "engineer" : user.role !== "owner") throw notFound();
  const page = `/releases/${release.id}`;
  try {
    if (intent === "build") {
      await buildInvoice(release.id);
      return redirect(`${page}#invoice`);
    }
    const invoice = await getInvoiceForRelease(release.id);
    if (!invoice) throw new BillingError("the release has no invoice yet", "no-invoice");
    if (intent === "send") await sendInvoice(invoice.id);
    else if (intent === "void") await voidInvoice(invoice.id);
    else {
      const appUrl = publicAppUrl();
      const { url } = await startCheckout(
        invoice.id,
        { successUrl: `${appUrl}${page}?paid={CHECKOUT_SESSION_ID}#invoice`, cancelUrl: `${appUrl}${page}#invoice` },
        { customerEmail: user.role === "client" ? user.email : null },
      );
      return redirect(url);
    }
    return redirect(`${page}#invoice`);
  } catch (error) {
    if (error instanceof BillingError || error instanceof InvoiceStateError) {
      const code = error instanceof BillingError ? error.code : "state";
      return redirect(`${page}?${new URLSearchParams({ invoiceError: code })}#invoice`);
    }
    throw error;
  }
}

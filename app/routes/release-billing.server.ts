// What the release page shows of billing and finals: the invoice (a client
// sees it once sent), whether the finals are open to this user, and whether
// there is anything delivered to download.
import { invoiceErrorMessage } from "../lib/billing/invoice-errors.ts";
import type { CurrentUser } from "../models/user.server.ts";
import { db } from "../lib/db.server.ts";
import { isStaff } from "../lib/roles.ts";
import { finalsOpenFor } from "../lib/render-visibility.server.ts";
import { getInvoiceForRelease, isReleasePaid } from "../models/invoice.server.ts";

export async function releaseBillingData(releaseId: string, user: Pick<CurrentUser, "role">, search: URLSearchParams) {
  const [found, paid, finalsOpen, delivered] = await Promise.all([
    getInvoiceForRelease(releaseId),
    isReleasePaid(releaseId),
    finalsOpenFor(user, releaseId),
    // A file whose format was deleted or changed is not in the package.
    db("deliveries").where({ release_id: releaseId, state: "done" }).whereNotNull("format_id").first("id"),
  ]);
  const staff = isStaff(user.role);
  const invoice = found && (staff || found.state !== "draft") ? found : undefined;
  return {
    role: user.role,
    invoice: invoice && {
      number: invoice.number,
      state: invoice.state,
      currency: invoice.currency,
      totalCents: invoice.totalCents,
      lines: invoice.lines.map((l) => ({ id: l.id, description: l.description, quantity: l.quantity, unitCents: l.unitCents, amountCents: l.amountCents })),
    },
    paid,
    finalsOpen,
    hasDeliveries: delivered !== undefined,
    // A code from the query string, said as our own sentence.
    invoiceError: invoiceErrorMessage(search.get("invoiceError")),
    returnedFromPayment: search.has("paid"),
  };
}

export type ReleaseBilling = Awaited<ReturnType<typeof releaseBillingData>>;

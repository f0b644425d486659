// The release page's invoice and final files: the owner builds, sends and
// voids the invoice; the client pays it on the hosted payment page; the
// final files (package, deliveries) open to the client once it is paid.
import { Form, Link } from "react-router";
import { FINALS_LOCKED_MESSAGE } from "../lib/billing/finals.ts";
import { formatCents } from "../lib/billing/settings-form.ts";
import type { ReleaseBilling } from "./release-billing.server.ts";

const money = (cents: number, currency: string) => `${formatCents(cents)} ${currency}`;

// A figure cell: right-aligned in the table; at phone width a line of its own, its label (data-label) on the left.
const FIGURE = "num text-right max-sm:flex max-sm:justify-between max-sm:border-0 max-sm:px-0 max-sm:py-0.5 max-sm:before:text-ink-soft max-sm:before:content-[attr(data-label)]";

const STATE_LABEL = { draft: "Draft", sent: "Sent, awaiting payment", paid: "Paid", void: "Void" } as const;

export function ReleaseBillingSection({ releaseId, billing }: { releaseId: string; billing: ReleaseBilling }) {
  const { invoice, role } = billing;
  const owner = role === "owner";
  const action = `/releases/${releaseId}/invoice`;
  return (
    <>
      <section id="invoice" aria-labelledby="invoice-heading" className="mt-8">
        <h2 id="invoice-heading" className="mb-2 text-lg font-semibold">
          Invoice
        </h2>
        {billing.invoiceError && (
          <p className="mb-3 text-sm text-danger" role="alert">
            {billing.invoiceError}
          </p>
        )}
        {billing.returnedFromPayment && invoice?.state !== "paid" && (
          <p className="mb-3 text-sm text-ink-soft" role="status">
            Thank you. The payment is being confirmed; reload this page in a moment.
          </p>
        )}
        {!invoice ? (
          <div className="card p-5 text-sm text-ink-soft">
            <p>{owner ? "No invoice yet. Building one bills every track at the studio's rate, and each extra printed revision." : "No invoice yet."}</p>
            {owner && (
              <div className="mt-3 flex flex-wrap gap-3">
                <Form method="post" action={action}>
                  <button type="submit" name="intent" value="build" className="btn-primary">
                    Build invoice
                  </button>
                </Form>
                <Link to="/settings/billing" className="btn-quiet">
                  Rates
                </Link>
              </div>
            )}
          </div>
        ) : (
          <div className="card p-5" data-invoice-state={invoice.state}>
            <p className="mb-3 text-sm">
              {invoice.number ? <span className="num font-medium">{invoice.number}</span> : "Unnumbered draft"} · <strong>{STATE_LABEL[invoice.state]}</strong>
            </p>
            {/* At phone width the lines stack: each row a block, each figure labelled from data-label. */}
            <div className="sm:overflow-x-auto">
              <table className="data-table max-sm:block" aria-label="Invoice lines">
                <thead className="max-sm:sr-only">
                  <tr>
                    <th scope="col">Item</th>
                    <th scope="col" className="text-right">
                      Qty
                    </th>
                    <th scope="col" className="text-right">
                      Unit
                    </th>
                    <th scope="col" className="text-right">
                      Amount
                    </th>
                  </tr>
                </thead>
                <tbody className="max-sm:block">
                  {invoice.lines.map((l) => (
                    <tr key={l.id} className="max-sm:block max-sm:border-b max-sm:border-rule/70 max-sm:py-2">
                      <td className="max-sm:block max-sm:border-0 max-sm:px-0 max-sm:py-0.5 max-sm:font-medium">{l.description}</td>
                      <td data-label="Qty" className={`${FIGURE} whitespace-nowrap`}>
                        {l.quantity}
                      </td>
                      <td data-label="Unit" className={`${FIGURE} whitespace-nowrap`}>
                        {money(l.unitCents, invoice.currency)}
                      </td>
                      <td data-label="Amount" className={`${FIGURE} whitespace-nowrap`}>
                        {money(l.amountCents, invoice.currency)}
                      </td>
                    </tr>
                  ))}
                </tbody>
                <tfoot className="max-sm:block">
                  <tr className="max-sm:flex max-sm:justify-between max-sm:pt-2">
                    <th scope="row" colSpan={3} className="text-right max-sm:border-0 max-sm:px-0">
                      Total
                    </th>
                    <td className="num whitespace-nowrap text-right font-semibold max-sm:border-0 max-sm:px-0" data-invoice-total>
                      {money(invoice.totalCents, invoice.currency)}
                    </td>
                  </tr>
                </tfoot>
              </table>
            </div>
            <Form method="post" action={action} className="mt-4 flex flex-wrap gap-3">
              {owner && invoice.state === "draft" && (
                <>
                  <button type="submit" name="intent" value="send" className="btn-primary">
                    Send to client
                  </button>
                  <button type="submit" name="intent" value="build" className="btn-quiet">
                    Rebuild from rates
                  </button>
                </>
              )}
              {owner && (invoice.state === "draft" || invoice.state === "sent") && (
                <button type="submit" name="intent" value="void" className="btn-quiet">
                  Void
                </button>
              )}
              {role === "client" && invoice.state === "sent" && (
                <button type="submit" name="intent" value="pay" className="btn-primary">
                  Pay {money(invoice.totalCents, invoice.currency)}
                </button>
              )}
            </Form>
          </div>
        )}
      </section>
      <section id="finals" aria-labelledby="finals-heading" className="mt-8">
        <h2 id="finals-heading" className="mb-2 text-lg font-semibold">
          Final files
        </h2>
        <div className="card flex flex-wrap items-center gap-3 p-5 text-sm">
          {!billing.finalsOpen ? (
            <p className="text-ink-soft">{FINALS_LOCKED_MESSAGE} Previews stay open for review.</p>
          ) : billing.hasDeliveries ? (
            <a href={`/releases/${releaseId}/package.zip`} className="btn-primary" download>
              Download all finals (zip)
            </a>
          ) : (
            <p className="text-ink-soft">Nothing has been delivered yet.</p>
          )}
          <Link to={`/releases/${releaseId}/loudness-report`} className="btn-quiet">
            Loudness report
          </Link>
          {role !== "client" && (
            <Link to={`/releases/${releaseId}/delivery`} className="btn-quiet">
              Deliveries
            </Link>
          )}
        </div>
      </section>
    </>
  );
}

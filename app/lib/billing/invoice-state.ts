// An invoice's life: draft → sent → paid, and draft or sent → void.
// A paid invoice is never voided here (that would be a refund, a matter for
// the payment provider and the books).

export type InvoiceState = "draft" | "sent" | "paid" | "void";

const NEXT: Record<InvoiceState, readonly InvoiceState[]> = {
  draft: ["sent", "void"],
  sent: ["paid", "void"],
  paid: [],
  void: [],
};

export const canMove = (from: InvoiceState, to: InvoiceState): boolean => NEXT[from].includes(to);

export class InvoiceStateError extends Error {
  constructor(
    readonly from: InvoiceState,
    readonly to: InvoiceState,
  ) {
    super(`an invoice that is ${from} cannot become ${to}`);
    this.name = "InvoiceStateError";
  }
}

export function assertMove(from: InvoiceState, to: InvoiceState): void {
  if (!canMove(from, to)) throw new InvoiceStateError(from, to);
}

// What the release page says when an invoice step was refused. The redirect
// carries only a code (?invoiceError=<code>); the sentence is chosen here, so
// no text from the address bar ever reaches the page.
export const INVOICE_ERROR_MESSAGES = {
  "no-invoice": "The release has no invoice yet.",
  "already-billed": "The release's invoice has already been sent; void it to bill again.",
  "no-tracks": "A release without tracks has nothing to bill.",
  "nothing-to-send": "An invoice of nothing cannot be sent; set the studio's rates first.",
  "no-recipient": "The release's client has no member to send the invoice to.",
  "not-payable": "Only a sent invoice can be paid.",
  changed: "The invoice changed while the payment page was being opened; try again.",
  state: "The invoice cannot take that step from where it is now.",
  refused: "That invoice step was refused.",
} as const;

export type InvoiceErrorCode = keyof typeof INVOICE_ERROR_MESSAGES;

/** The sentence for a code from the query string; null for no code, the general sentence for an unknown one. */
export function invoiceErrorMessage(code: string | null): string | null {
  if (!code) return null;
  return Object.hasOwn(INVOICE_ERROR_MESSAGES, code) ? INVOICE_ERROR_MESSAGES[code as InvoiceErrorCode] : INVOICE_ERROR_MESSAGES.refused;
}

// The messages Tidemark sends. Each returns { subject, text, html } for the
// mailer's outbox; the caller gives the names, amounts and the link to open.
import { composeEmail, type EmailParts } from "./layout.server.ts";

export type { EmailParts };

const quoted = (title: string) => `“${title}”`;

/** “Title”, or “Track” (Release) when the track is not the release itself. */
function workTitle(releaseTitle: string, trackTitle?: string | null) {
  return trackTitle && trackTitle !== releaseTitle ? `${quoted(trackTitle)} (${releaseTitle})` : quoted(releaseTitle);
}

export function formatMoney(amountCents: number, currency: string): string {
  if (!Number.isInteger(amountCents)) throw new Error(`amountCents must be a whole number of cents: ${amountCents}`);
  return new Intl.NumberFormat("en", { style: "currency", currency: currency.toUpperCase() }).format(amountCents / 100);
}

/** A position in a track, m:ss. */
export function formatPosition(seconds: number): string {
  const whole = Math.max(0, Math.floor(seconds));
  return `${Math.floor(whole / 60)}:${String(whole % 60).padStart(2, "0")}`;
}

const formatDate = (date: Date) =>
  new Intl.DateTimeFormat("en-GB", { day: "numeric", month: "long", year: "numeric", timeZone: "UTC" }).format(date);

const footnote = (studioName: string) => `You receive this because you work with ${studioName} on Tidemark.`;

export function invitationEmail(p: { studioName: string; inviterName: string; role: "owner" | "engineer" | "client"; link: string; expiresInDays?: number }): EmailParts {
  const roleWords = { owner: "an owner", engineer: "an engineer", client: "a client" }[p.role];
  return composeEmail({
    subject: `${p.inviterName} invited you to ${p.studioName} on Tidemark`,
    heading: `Join ${p.studioName}`,
    lines: [
      `${p.inviterName} invited you to join ${p.studioName} as ${roleWords}.`,
      p.expiresInDays ? `The invitation is valid for ${p.expiresInDays} days.` : "Choose a password to accept the invitation.",
    ],
    action: { label: "Accept the invitation", url: p.link },
    footnote: `If you did not expect this invitation, ignore this e-mail; nothing happens until you accept. ${footnote(p.studioName)}`,
  });
}

export function renderForReviewEmail(p: { studioName: string; engineerName: string; releaseTitle: string; trackTitle?: string | null; note?: string | null; link: string }): EmailParts {
  const work = workTitle(p.releaseTitle, p.trackTitle);
  return composeEmail({
    subject: `New master of ${work} ready for review`,
    heading: "A new master is ready for you",
    lines: [
      `${p.engineerName} at ${p.studioName} sent a new master of ${work} for your review.`,
      "Listen, leave comments at any moment of the track, then approve it or ask for changes.",
    ],
    quote: p.note ? { author: p.engineerName, body: p.note } : null,
    action: { label: "Listen and review", url: p.link },
    footnote: footnote(p.studioName),
  });
}

export function commentEmail(p: { studioName: string; authorName: string; releaseTitle: string; trackTitle?: string | null; atSeconds?: number | null; body: string; link: string }): EmailParts {
  const work = workTitle(p.releaseTitle, p.trackTitle);
  const at = p.atSeconds === undefined || p.atSeconds === null ? "" : ` at ${formatPosition(p.atSeconds)}`;
  return composeEmail({
    subject: `${p.authorName} commented on ${work}`,
    heading: `New comment${at}`,
    lines: [`${p.authorName} left a comment on ${work}${at}.`],
    quote: { author: p.authorName, body: p.body },
    action: { label: "Open the comment", url: p.link },
    footnote: footnote(p.studioName),
  });
}

export function changesRequestedEmail(p: { studioName: string; clientName: string; releaseTitle: string; trackTitle?: string | null; note?: string | null; link: string }): EmailParts {
  const work = workTitle(p.releaseTitle, p.trackTitle);
  return composeEmail({
    subject: `Changes asked for ${work}`,
    heading: "Changes asked",
    lines: [`${p.clientName} listened to ${work} and asked for changes.`],
    quote: p.note ? { author: p.clientName, body: p.note } : null,
    action: { label: "See the request", url: p.link },
    footnote: footnote(p.studioName),
  });
}

export function approvedEmail(p: { studioName: string; clientName: string; releaseTitle: string; trackTitle?: string | null; link: string }): EmailParts {
  const work = workTitle(p.releaseTitle, p.trackTitle);
  return composeEmail({
    subject: `${work} approved by ${p.clientName}`,
    heading: "Approved",
    lines: [`${p.clientName} approved ${work}. The approved master can now be printed and delivered.`],
    action: { label: "Open the release", url: p.link },
    footnote: footnote(p.studioName),
  });
}

export function invoiceSentEmail(p: { studioName: string; releaseTitle: string; invoiceNumber: string; amountCents: number; currency: string; dueDate?: Date | null; link: string }): EmailParts {
  const amount = formatMoney(p.amountCents, p.currency);
  return composeEmail({
    subject: `Invoice ${p.invoiceNumber} from ${p.studioName}: ${amount}`,
    heading: `Invoice ${p.invoiceNumber}`,
    lines: [
      `${p.studioName} sent you invoice ${p.invoiceNumber} for ${quoted(p.releaseTitle)}: ${amount}.`,
      p.dueDate ? `Payment is due by ${formatDate(p.dueDate)}.` : "You can pay it online.",
      "The final files unlock for download once the invoice is paid.",
    ],
    action: { label: "View and pay the invoice", url: p.link },
    footnote: footnote(p.studioName),
  });
}

export function paymentReceiptEmail(p: { studioName: string; releaseTitle: string; invoiceNumber: string; amountCents: number; currency: string; paidAt: Date; link: string }): EmailParts {
  const amount = formatMoney(p.amountCents, p.currency);
  return composeEmail({
    subject: `Receipt: ${amount} paid for invoice ${p.invoiceNumber}`,
    heading: "Payment received",
    lines: [
      `Thank you. ${amount} for invoice ${p.invoiceNumber} (${quoted(p.releaseTitle)}) was paid on ${formatDate(p.paidAt)}.`,
      "The final files of the release are ready to download.",
    ],
    action: { label: "Download the finals", url: p.link },
    footnote: footnote(p.studioName),
  });
}

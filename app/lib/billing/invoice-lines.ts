// The lines of a release's invoice from the studio's rates: one line per
// track at the track rate, and one line per track that needed extra
// revisions, at the revision rate.
//
// What counts as an extra revision: the first chain revision of a track that
// has a finished print is what the track rate pays for; every further
// distinct chain revision with a finished print of that track is one extra
// revision. Printing the same revision again (another mix version, a
// re-render) is not a revision of the mastering and is not billed; saving a
// revision that was never printed is work in progress and is not billed.

export interface TrackForBilling {
  trackId: string;
  position: number;
  title: string;
  /** Distinct chain revisions with a finished print of this track. */
  printedRevisions: number;
}

export interface Rates {
  trackRateCents: number;
  revisionRateCents: number;
}

export interface InvoiceLineDraft {
  position: number;
  kind: "track" | "revision";
  trackId: string;
  description: string;
  quantity: number;
  unitCents: number;
  amountCents: number;
}

export const extraRevisions = (printedRevisions: number): number => Math.max(0, printedRevisions - 1);

export function buildInvoiceLines(tracks: readonly TrackForBilling[], rates: Rates): InvoiceLineDraft[] {
  for (const [name, cents] of Object.entries(rates)) {
    if (!Number.isInteger(cents) || cents < 0) throw new RangeError(`${name} must be a whole number of cents, 0 or more (got ${cents})`);
  }
  const lines: InvoiceLineDraft[] = [];
  const sorted = [...tracks].sort((a, b) => a.position - b.position);
  for (const t of sorted) {
    lines.push({
      position: lines.length + 1,
      kind: "track",
      trackId: t.trackId,
      description: `Mastering: ${t.position}. ${t.title}`,
      quantity: 1,
      unitCents: rates.trackRateCents,
      amountCents: rates.trackRateCents,
    });
  }
  for (const t of sorted) {
    const extra = extraRevisions(t.printedRevisions);
    if (extra === 0) continue;
    lines.push({
      position: lines.length + 1,
      kind: "revision",
      trackId: t.trackId,
      description: `Extra ${extra === 1 ? "revision" : "revisions"}: ${t.position}. ${t.title}`,
      quantity: extra,
      unitCents: rates.revisionRateCents,
      amountCents: extra * rates.revisionRateCents,
    });
  }
  return lines;
}

export const totalCents = (lines: readonly { amountCents: number }[]): number => lines.reduce((sum, l) => sum + l.amountCents, 0);

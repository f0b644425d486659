// A studio's billing rates, currency, invoice numbering and the loudness
// reference levels of its reports. A studio without a row gets the defaults;
// the row is written on the first save.
import type { Knex } from "knex";
import { db } from "../lib/db.server.ts";
import { checkReferences, DEFAULT_NORMALISATION_REFERENCES, type NormalisationReference } from "../lib/delivery/normalisation.ts";

export type StudioSettings = {
  studioId: string;
  currency: string;
  trackRateCents: number;
  revisionRateCents: number;
  normalisationReferences: NormalisationReference[];
  invoicePrefix: string;
};

type Row = {
  studio_id: string;
  currency: string;
  track_rate_cents: number;
  revision_rate_cents: number;
  normalisation_references: NormalisationReference[];
  invoice_prefix: string;
};

const fromRow = (r: Row): StudioSettings => ({
  studioId: r.studio_id,
  currency: r.currency,
  trackRateCents: r.track_rate_cents,
  revisionRateCents: r.revision_rate_cents,
  normalisationReferences: r.normalisation_references,
  invoicePrefix: r.invoice_prefix,
});

export function defaultSettings(studioId: string): StudioSettings {
  return {
    studioId,
    currency: "EUR",
    trackRateCents: 0,
    revisionRateCents: 0,
    normalisationReferences: DEFAULT_NORMALISATION_REFERENCES.map((r) => ({ ...r })),
    invoicePrefix: "INV",
  };
}

export async function getStudioSettings(studioId: string, conn: Knex | Knex.Transaction = db): Promise<StudioSettings> {
  const row = await conn<Row>("studio_settings").where({ studio_id: studioId }).first();
  return row ? fromRow(row) : defaultSettings(studioId);
}

export type SettingsChange = Partial<Omit<StudioSettings, "studioId">>;

/** Validates and saves a change; unchanged fields keep their value (or the default). */
export async function saveStudioSettings(studioId: string, change: SettingsChange, conn: Knex | Knex.Transaction = db): Promise<StudioSettings> {
  const next = { ...(await getStudioSettings(studioId, conn)), ...change };
  const currency = next.currency.toUpperCase();
  if (!/^[A-Z]{3}$/.test(currency)) throw new RangeError("currency must be a three-letter ISO 4217 code");
  for (const [field, cents] of [["trackRateCents", next.trackRateCents], ["revisionRateCents", next.revisionRateCents]] as const) {
    if (!Number.isInteger(cents) || cents < 0 || cents > 100_000_000) throw new RangeError(`${field} must be a whole number of cents, 0 or more`);
  }
  if (!/^[A-Z0-9-]{1,12}$/.test(next.invoicePrefix)) throw new RangeError("invoicePrefix must be 1 to 12 capital letters, digits or hyphens");
  const references = checkReferences(next.normalisationReferences);
  const values = {
    studio_id: studioId,
    currency,
    track_rate_cents: next.trackRateCents,
    revision_rate_cents: next.revisionRateCents,
    normalisation_references: JSON.stringify(references),
    invoice_prefix: next.invoicePrefix,
    updated_at: conn.fn.now(),
  };
  const [row] = await conn("studio_settings").insert(values).onConflict("studio_id").merge().returning<Row[]>("*");
  return fromRow(row!);
}

/**
 * Hands out the studio's next invoice number ("INV-0007") inside the caller's
 * transaction; the row lock makes two simultaneous sends get different numbers.
 */
export async function takeInvoiceNumber(trx: Knex.Transaction, studioId: string): Promise<string> {
  await trx("studio_settings").insert({ studio_id: studioId, normalisation_references: JSON.stringify(DEFAULT_NORMALISATION_REFERENCES) }).onConflict("studio_id").ignore();
  const [row] = await trx("studio_settings")
    .where({ studio_id: studioId })
    .update({ next_invoice_number: trx.raw("next_invoice_number + 1") })
    .returning<{ invoice_prefix: string; next_invoice_number: number }[]>(["invoice_prefix", "next_invoice_number"]);
  return `${row!.invoice_prefix}-${String(row!.next_invoice_number - 1).padStart(4, "0")}`;
}

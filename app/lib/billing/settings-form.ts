// The owner's billing and loudness settings as a form: amounts typed as
// money ("250" or "250.50") become whole cents; the reference levels are one
// per line, "Name: -14" (the last colon separates the level).
import { z } from "zod";

const MONEY = /^\d{1,7}(\.\d{1,2})?$/;

/** "250.5" → 25050. Exact: the digits are read as text, never through floating point. */
export function parseMoneyCents(text: string): number {
  const t = text.trim();
  if (!MONEY.test(t)) throw new RangeError("write an amount like 250 or 250.50");
  const [whole, fraction = ""] = t.split(".");
  return Number(whole) * 100 + Number(fraction.padEnd(2, "0"));
}

export const formatCents = (cents: number): string => `${Math.floor(cents / 100)}.${String(cents % 100).padStart(2, "0")}`;

const money = z
  .string()
  .trim()
  .regex(MONEY, "Write an amount like 250 or 250.50.")
  .transform(parseMoneyCents);

export const referenceLinesSchema = z
  .string()
  .transform((text, ctx) => {
    const references: { name: string; lufs: number }[] = [];
    for (const [i, raw] of text.split(/\r?\n/).entries()) {
      const line = raw.trim();
      if (!line) continue;
      const at = line.lastIndexOf(":");
      const name = at > 0 ? line.slice(0, at).trim() : "";
      const lufs = at > 0 ? Number(line.slice(at + 1).trim().replace("−", "-")) : Number.NaN;
      if (!name || !Number.isFinite(lufs) || lufs > 0 || lufs < -40) {
        ctx.addIssue({ code: "custom", message: `Line ${i + 1}: write "Name: -14" with a level between -40 and 0 LUFS.` });
        return z.NEVER;
      }
      references.push({ name, lufs });
    }
    return references;
  });

export const billingSettingsSchema = z.object({
  currency: z
    .string()
    .trim()
    .regex(/^[A-Za-z]{3}$/, "Use a three-letter currency code such as EUR.")
    .transform((c) => c.toUpperCase()),
  trackRate: money,
  revisionRate: money,
  references: referenceLinesSchema,
});

export type BillingSettingsInput = z.output<typeof billingSettingsSchema>;

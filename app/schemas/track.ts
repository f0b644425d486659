import { z } from "zod";

/** ISRC (ISO 3901) as typed by people: hyphens and spaces allowed, any case. */
export function normalizeIsrc(raw: string): string {
  return raw.replace(/[\s-]/g, "").toUpperCase();
}

export const trackSchema = z.object({
  title: z.string().trim().min(1, "Give the track a title").max(200, "At most 200 characters"),
  position: z.coerce
    .number({ error: "Enter a whole number" })
    .int("Enter a whole number")
    .min(1, "Positions start at 1")
    .max(999, "At most 999"),
  isrc: z
    .string()
    .optional()
    .transform((value) => normalizeIsrc(value ?? ""))
    .refine((value) => value === "" || /^[A-Z]{2}[A-Z0-9]{3}[0-9]{7}$/.test(value), {
      message: "An ISRC has 12 characters, like GB-XYZ-27-00001",
    })
    .transform((value) => (value === "" ? null : value)),
});
export type TrackInput = z.output<typeof trackSchema>;

/** Shown as CC-XXX-YY-NNNNN. */
export function formatIsrc(isrc: string): string {
  return `${isrc.slice(0, 2)}-${isrc.slice(2, 5)}-${isrc.slice(5, 7)}-${isrc.slice(7)}`;
}

/** Moving a track one place up or down the release's running order. */
export const trackMoveSchema = z.object({
  trackId: z.uuid({ message: "Choose a track." }),
  direction: z.enum(["up", "down"], { error: "Move up or down." }),
});

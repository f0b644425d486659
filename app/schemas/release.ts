import { z } from "zod";

export const RELEASE_KINDS = ["single", "ep", "album"] as const;
export const RELEASE_STATUSES = ["intake", "mastering", "review", "approved", "delivered"] as const;
export type ReleaseKind = (typeof RELEASE_KINDS)[number];
export type ReleaseStatus = (typeof RELEASE_STATUSES)[number];

export const RELEASE_KIND_LABELS: Record<ReleaseKind, string> = { single: "Single", ep: "EP", album: "Album" };
export const RELEASE_STATUS_LABELS: Record<ReleaseStatus, string> = {
  intake: "Intake",
  mastering: "Mastering",
  review: "In review",
  approved: "Approved",
  delivered: "Delivered",
};

export const releaseSchema = z.object({
  title: z.string().trim().min(1, "Give the release a title").max(200, "At most 200 characters"),
  kind: z.enum(RELEASE_KINDS, { error: "Choose single, EP or album" }),
  clientId: z.uuid({ error: "Choose the client" }),
  status: z.enum(RELEASE_STATUSES, { error: "Choose a status" }).default("intake"),
  dueOn: z
    .string()
    .trim()
    .transform((value) => (value === "" ? null : value))
    .pipe(z.iso.date({ error: "Use a date like 2027-03-15" }).nullable())
    .optional()
    .transform((value) => value ?? null),
});
export type ReleaseInput = z.output<typeof releaseSchema>;

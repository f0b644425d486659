import { z } from "zod";
import { parseIsrc } from "../../dsp/delivery/isrc.ts";

// One ISRC rule for forms, the API and delivered files: dsp/delivery/isrc.ts.
export { formatIsrc } from "../../dsp/delivery/isrc.ts";

/** An optional ISRC field: empty is none; anything else must be a valid code, stored compact. */
export function isrcField<T extends z.ZodType<string | null | undefined>>(text: T) {
  return text.transform((value, ctx) => {
    const typed = (value ?? "").trim();
    if (typed === "") return null;
    const result = parseIsrc(typed);
    if (!result.ok) {
      ctx.addIssue({ code: "custom", message: result.message });
      return z.NEVER;
    }
    return result.isrc;
  });
}

export const trackSchema = z.object({
  title: z.string().trim().min(1, "Give the track a title").max(200, "At most 200 characters"),
  position: z.coerce
    .number({ error: "Enter a whole number" })
    .int("Enter a whole number")
    .min(1, "Positions start at 1")
    .max(999, "At most 999"),
  isrc: isrcField(z.string().optional()),
});
export type TrackInput = z.output<typeof trackSchema>;

/** Moving a track one place up or down the release's running order. */
export const trackMoveSchema = z.object({
  trackId: z.uuid({ message: "Choose a track." }),
  direction: z.enum(["up", "down"], { error: "Move up or down." }),
});

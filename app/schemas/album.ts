// Album and reference forms of the release page.
import { z } from "zod";

export const albumGapSchema = z.object({
  trackId: z.guid("Choose a track."),
  gapS: z.coerce.number("Give the gap in seconds.").finite("Give the gap in seconds.").min(0, "A gap cannot be negative.").max(60, "A gap is at most 60 s."),
});

export const referenceDeleteSchema = z.object({ referenceId: z.guid() });

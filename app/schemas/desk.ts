// What the desk posts besides the chain itself (which dsp/chain/schema.ts
// checks): the intent, the mix it was heard on, and for a preview its region.
import { z } from "zod";

/** The longest region the desk plays (the engine holds it decoded in memory). */
export const DESK_MAX_REGION_S = 120;

const seconds = (message: string) =>
  z
    .string({ error: message })
    .transform((v) => v.trim().replace("−", "-"))
    .refine((v) => v !== "" && Number.isFinite(Number(v)), { message })
    .transform(Number);

export const deskRenderSchema = z
  .object({
    kind: z.enum(["preview", "print"], { error: "Choose preview or print" }),
    mixId: z.uuid({ error: "Choose a mix version" }),
    startS: seconds("Enter where the region starts, in seconds").optional(),
    endS: seconds("Enter where the region ends, in seconds").optional(),
  })
  .superRefine((v, ctx) => {
    if (v.kind !== "preview") return;
    if (v.startS === undefined) ctx.addIssue({ code: "custom", path: ["startS"], message: "Enter where the region starts, in seconds" });
    else if (v.startS < 0) ctx.addIssue({ code: "custom", path: ["startS"], message: "At least 0 s" });
    if (v.endS === undefined) ctx.addIssue({ code: "custom", path: ["endS"], message: "Enter where the region ends, in seconds" });
    else if (v.startS !== undefined && !(v.endS > v.startS)) ctx.addIssue({ code: "custom", path: ["endS"], message: "The end comes after the start" });
  });
export type DeskRenderInput = z.output<typeof deskRenderSchema>;

/** A region the desk may play: inside the mix, start before end, at most DESK_MAX_REGION_S long. */
export function clampRegion(region: { startS: number; endS: number }, durationS: number): { startS: number; endS: number } {
  const startS = Math.min(Math.max(0, region.startS), Math.max(0, durationS - 0.1));
  const endS = Math.min(durationS, Math.max(startS + 0.1, Math.min(region.endS, startS + DESK_MAX_REGION_S)));
  return { startS, endS };
}

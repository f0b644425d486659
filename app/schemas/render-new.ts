// The new-render form, checked in the browser's shape and again on the server.
import { z } from "zod";
import { OUTPUT_FIELDS } from "../../dsp/chain/fields.ts";

const TARGET = OUTPUT_FIELDS.targetLufs;
/** "−40" with a true minus sign, as the page prints numbers. */
const signed = (n: number) => String(n).replace("-", "−");

const optionalNumber = (message: string) =>
  z
    .string()
    .optional()
    .transform((v) => (v ?? "").trim().replace("−", "-"))
    .refine((v) => v === "" || Number.isFinite(Number(v)), { message })
    .transform((v) => (v === "" ? null : Number(v)));

export const renderNewSchema = z
  .object({
    mixId: z.uuid({ error: "Choose a mix version" }),
    chainRevisionId: z.uuid({ error: "Choose a chain" }),
    kind: z.enum(["preview", "print"], { error: "Choose preview or print" }),
    region: z.enum(["loudest", "range"]).default("loudest"),
    startS: optionalNumber("Enter seconds, e.g. 42.5"),
    endS: optionalNumber("Enter seconds, e.g. 72.5"),
    targetLufs: optionalNumber("Enter a loudness in LUFS, e.g. −14"),
  })
  .superRefine((v, ctx) => {
    if (v.targetLufs !== null && (v.targetLufs < TARGET.min || v.targetLufs > TARGET.max)) {
      ctx.addIssue({ code: "custom", path: ["targetLufs"], message: `A target between ${signed(TARGET.min)} and ${signed(TARGET.max)} LUFS` });
    }
    if (v.kind !== "preview" || v.region !== "range") return;
    if (v.startS === null) ctx.addIssue({ code: "custom", path: ["startS"], message: "Enter where the preview starts, in seconds" });
    else if (v.startS < 0) ctx.addIssue({ code: "custom", path: ["startS"], message: "At least 0 s" });
    if (v.endS === null) ctx.addIssue({ code: "custom", path: ["endS"], message: "Enter where the preview ends, in seconds" });
    else if (v.startS !== null && v.endS <= v.startS) ctx.addIssue({ code: "custom", path: ["endS"], message: "The end comes after the start" });
  });
export type RenderNewInput = z.output<typeof renderNewSchema>;

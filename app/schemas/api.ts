// JSON bodies the API takes, checked with zod; strict, so a misspelt field is named.
import { z } from "zod";
import { RELEASE_KINDS, RELEASE_STATUSES } from "./release.ts";
import { isrcField } from "./track.ts";
import { OUTPUT_FIELDS } from "../../dsp/chain/fields.ts";

const TARGET = OUTPUT_FIELDS.targetLufs;

export const apiReleaseSchema = z.strictObject({
  title: z.string({ error: "must be text" }).trim().min(1, "Give the release a title").max(200, "At most 200 characters"),
  kind: z.enum(RELEASE_KINDS, { error: `must be one of ${RELEASE_KINDS.join(", ")}` }),
  clientId: z.uuid({ error: "must be the id of one of the studio's clients" }),
  status: z.enum(RELEASE_STATUSES, { error: `must be one of ${RELEASE_STATUSES.join(", ")}` }).default("intake"),
  dueOn: z.iso.date({ error: "must be a date like 2027-03-15" }).nullable().default(null),
});

export const apiTrackSchema = z.strictObject({
  title: z.string({ error: "must be text" }).trim().min(1, "Give the track a title").max(200, "At most 200 characters"),
  position: z.number({ error: "must be a whole number" }).int("must be a whole number").min(1, "Positions start at 1").max(999, "At most 999").optional(),
  isrc: isrcField(z.string({ error: "must be text" }).nullable().default(null)),
});

export const apiNewChainSchema = z.strictObject({
  name: z.string({ error: "must be text" }).trim().min(1, "Enter a name").max(120, "At most 120 characters"),
  /** null or absent: a studio template. */
  trackId: z.uuid({ error: "must be a track id" }).nullable().default(null),
  /** Start as a copy of this template's latest revision… */
  templateId: z.uuid({ error: "must be a template id" }).nullable().default(null),
  /** …or with these parameters (checked by the renderer's schema). */
  params: z.unknown().optional(),
}).refine((v) => !(v.templateId && v.params !== undefined), { message: "give templateId or params, not both", path: ["params"] });

export const apiRevisionSchema = z.strictObject({ params: z.unknown().refine((v) => v !== undefined, { message: "is required" }) });

export const apiRenderSchema = z
  .strictObject({
    mixId: z.uuid({ error: "must be a mix id" }),
    chainRevisionId: z.uuid({ error: "must be a chain revision id" }),
    kind: z.enum(["preview", "print"], { error: 'must be "preview" or "print"' }),
    region: z
      .strictObject({ startS: z.number({ error: "must be seconds" }).min(0, "must be at least 0"), endS: z.number({ error: "must be seconds" }) })
      .refine((r) => r.endS > r.startS, { message: "must end after it starts", path: ["endS"] })
      .nullable()
      .default(null),
    targetLufs: z
      .number({ error: "must be a number of LUFS" })
      .min(TARGET.min, `must be at least ${TARGET.min}`)
      .max(TARGET.max, `must be at most ${TARGET.max}`)
      .nullable()
      .default(null),
  })
  .refine((v) => !(v.kind === "print" && v.region), { message: "a print renders the whole mix; only a preview has a region", path: ["region"] });

// The "new chain" form shared by the track's and the templates' pages.
import { z } from "zod";
import { parseForm, type FormResult } from "./forms.ts";

export const newChainSchema = z.object({
  name: z.string().trim().min(1, "Enter a name").max(120, "At most 120 characters"),
  templateId: z.union([z.literal(""), z.uuid("Choose a template")]).transform((v) => v || null),
});

export function parseNewChainForm(form: FormData): FormResult<z.output<typeof newChainSchema>> {
  return parseForm(newChainSchema, form);
}

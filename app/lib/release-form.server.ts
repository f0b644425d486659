// Validation of the release form shared by the create and edit actions:
// the schema first, then what only the database knows (the client is this studio's).
import { formValues, parseForm, type FormResult } from "./forms.ts";
import { releaseSchema, type ReleaseInput } from "../schemas/release.ts";
import { clientInStudio } from "../models/client.server.ts";

export async function validateReleaseForm(studioId: string, form: FormData): Promise<FormResult<ReleaseInput>> {
  const result = parseForm(releaseSchema, form);
  if (!result.ok) return result;
  if (!(await clientInStudio(studioId, result.data.clientId))) {
    return { ok: false, errors: { clientId: "Choose the client" }, values: formValues(form) };
  }
  return result;
}

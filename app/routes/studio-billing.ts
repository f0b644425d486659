// POST /settings/billing — the owner saves the studio's currency, rates and
// loudness reference levels. Field errors answer 400; success goes back to
// the settings page.
import { data, redirect } from "react-router";
import { requireRole } from "../lib/auth.server.ts";
import { billingSettingsSchema } from "../lib/billing/settings-form.ts";
import { formValues, parseForm } from "../lib/forms.ts";
import { saveStudioSettings } from "../models/studio-settings.server.ts";

export async function action({ request }: { request: Request }) {
  const user = await requireRole(request, ["owner"]);
  const form = await request.formData();
  const result = parseForm(billingSettingsSchema, form);
  if (!result.ok) return data({ errors: result.errors, values: result.values }, { status: 400 });
  const { currency, trackRate, revisionRate, references } = result.data;
  try {
    await saveStudioSettings(user.studioId, { currency, trackRateCents: trackRate, revisionRateCents: revisionRate, normalisationReferences: references });
  } catch (error) {
    if (error instanceof RangeError || error instanceof TypeError) return data({ errors: { references: error.message }, values: formValues(form) }, { status: 400 });
    throw error;
  }
  return redirect("/settings#billing");
}

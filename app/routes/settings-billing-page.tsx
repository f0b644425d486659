// /settings/billing — the owner's rates (per track, per extra revision),
// currency and the loudness reference levels of reports, as a form. Field
// errors answer 400 beside the fields; a save comes back here, "Saved."
import { data, Form, Link, redirect } from "react-router";
import type { Route } from "./+types/settings-billing-page";
import { requireRole } from "../lib/auth.server.ts";
import { billingSettingsSchema, formatCents } from "../lib/billing/settings-form.ts";
import { formValues, parseForm } from "../lib/forms.ts";
import { getStudioSettings, saveStudioSettings } from "../models/studio-settings.server.ts";
import { FormNotice, TextField } from "../components/field.tsx";
import { PageHeader } from "../components/page-header.tsx";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, ["owner"]);
  const s = await getStudioSettings(user.studioId);
  return {
    saved: new URL(request.url).searchParams.has("saved"),
    values: {
      currency: s.currency,
      trackRate: formatCents(s.trackRateCents),
      revisionRate: formatCents(s.revisionRateCents),
      references: s.normalisationReferences.map((r) => `${r.name}: ${r.lufs}`).join("\n"),
    },
  };
}

export async function action({ request }: Route.ActionArgs) {
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
  return redirect("/settings/billing?saved=1");
}

export default function SettingsBilling({ loaderData, actionData }: Route.ComponentProps) {
  const failed = actionData as { errors: Record<string, string | undefined>; values: Record<string, string> } | undefined;
  const values = failed?.values ?? loaderData.values;
  return (
    <>
      <PageHeader eyebrow={<Link to="/settings">Settings</Link>} title="Billing and loudness references" />
      <Form method="post" className="card max-w-xl space-y-4 p-5" noValidate>
        <FormNotice message={!failed && loaderData.saved ? "Saved." : undefined} tone="info" />
        <TextField label="Currency" name="currency" defaultValue={values.currency} error={failed?.errors.currency} hint="Three letters, such as EUR." maxLength={3} />
        <TextField label="Rate per track" name="trackRate" inputMode="decimal" defaultValue={values.trackRate} error={failed?.errors.trackRate} hint="For example 250 or 250.50." />
        <TextField label="Rate per extra revision" name="revisionRate" inputMode="decimal" defaultValue={values.revisionRate} error={failed?.errors.revisionRate} hint="Each printed revision of a track after the first." />
        <ReferencesField defaultValue={values.references} error={failed?.errors.references} />
        <button type="submit" className="btn-primary">
          Save
        </button>
      </Form>
    </>
  );
}

function ReferencesField({ defaultValue, error }: { defaultValue?: string; error?: string }) {
  return (
    <div>
      <label htmlFor="references" className="mb-1.5 block text-sm font-medium text-ink">
        Loudness reference levels (LUFS)
      </label>
      <textarea
        id="references"
        name="references"
        rows={4}
        defaultValue={defaultValue}
        className="field-input font-mono"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? "references-error" : "references-hint"}
      />
      {error ? (
        <p id="references-error" className="mt-1.5 text-sm text-danger" role="alert">
          {error}
        </p>
      ) : (
        <p id="references-hint" className="mt-1.5 text-sm text-ink-faint">
          One per line, as "Name: -14". Reports show how far each level would turn a track down.
        </p>
      )}
    </div>
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Billing · Tidemark" }];

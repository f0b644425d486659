import { Form } from "react-router";
import type { FieldErrors } from "../lib/forms.ts";
import { FormActions, TextField } from "./field.tsx";

export type TrackFormValues = { title?: string; position?: string; isrc?: string };

export function TrackForm({
  values,
  errors,
  submitLabel,
  cancelTo,
}: {
  values: TrackFormValues;
  errors: FieldErrors;
  submitLabel: string;
  cancelTo: string;
}) {
  return (
    <Form method="post" className="card max-w-2xl space-y-5 p-5 sm:p-6" noValidate>
      <div className="grid gap-5 sm:grid-cols-[7rem_1fr]">
        <TextField label="Position" name="position" inputMode="numeric" defaultValue={values.position} error={errors.position} required />
        <TextField label="Title" name="title" defaultValue={values.title} error={errors.title} required />
      </div>
      <TextField label="ISRC" name="isrc" defaultValue={values.isrc} error={errors.isrc} hint="Optional, e.g. GB-XYZ-27-00001" autoCapitalize="characters" />
      <FormActions submitLabel={submitLabel} cancelTo={cancelTo} />
    </Form>
  );
}

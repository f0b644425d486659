import { Form } from "react-router";
import type { FieldErrors } from "../lib/forms.ts";
import { RELEASE_KINDS, RELEASE_KIND_LABELS, RELEASE_STATUSES, RELEASE_STATUS_LABELS } from "../schemas/release.ts";
import { FormActions, SelectField, TextField } from "./field.tsx";

export type ReleaseFormValues = { title?: string; kind?: string; clientId?: string; status?: string; dueOn?: string };

export function ReleaseForm({
  clients,
  values,
  errors,
  submitLabel,
  cancelTo,
}: {
  clients: { id: string; name: string }[];
  values: ReleaseFormValues;
  errors: FieldErrors;
  submitLabel: string;
  cancelTo: string;
}) {
  return (
    <Form method="post" className="card max-w-2xl space-y-5 p-5 sm:p-6" noValidate>
      <TextField label="Title" name="title" defaultValue={values.title} error={errors.title} required />
      <div className="grid gap-5 sm:grid-cols-2">
        <SelectField
          label="Kind"
          name="kind"
          defaultValue={values.kind}
          placeholder="Choose…"
          options={RELEASE_KINDS.map((kind) => ({ value: kind, label: RELEASE_KIND_LABELS[kind] }))}
          error={errors.kind}
        />
        <SelectField
          label="Client"
          name="clientId"
          defaultValue={values.clientId}
          placeholder="Choose…"
          options={clients.map((client) => ({ value: client.id, label: client.name }))}
          error={errors.clientId}
        />
        <SelectField
          label="Status"
          name="status"
          defaultValue={values.status ?? "intake"}
          options={RELEASE_STATUSES.map((status) => ({ value: status, label: RELEASE_STATUS_LABELS[status] }))}
          error={errors.status}
        />
        <TextField label="Due" name="dueOn" type="date" defaultValue={values.dueOn} error={errors.dueOn} hint="Optional" />
      </div>
      <FormActions submitLabel={submitLabel} cancelTo={cancelTo} />
    </Form>
  );
}

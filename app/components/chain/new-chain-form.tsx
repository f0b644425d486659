// Name a new chain and pick the template it starts from (or none).
import { Form } from "react-router";
import { SelectField, TextField } from "../field.tsx";

export function NewChainForm({ templates, errors, values, submitLabel }: { templates: { id: string; name: string }[]; errors: Record<string, string | undefined>; values: Record<string, string>; submitLabel: string }) {
  return (
    <Form method="post" noValidate className="card max-w-xl space-y-4 p-5">
      <TextField label="Name" name="name" defaultValue={values.name ?? ""} error={errors.name} />
      <SelectField
        label="Start from"
        name="templateId"
        defaultValue={values.templateId ?? templates[0]?.id ?? ""}
        error={errors.templateId}
        options={[...templates.map((t) => ({ value: t.id, label: `Template: ${t.name}` })), { value: "", label: "An empty chain" }]}
      />
      <button type="submit" className="btn-primary">
        {submitLabel}
      </button>
    </Form>
  );
}

// Parsing form data with a zod schema into either values or errors per field.
import type { z } from "zod";

export type FieldErrors = Partial<Record<string, string>>;

export type FormResult<T> =
  | { ok: true; data: T }
  | { ok: false; errors: FieldErrors; values: Record<string, string> };

export function formValues(form: FormData): Record<string, string> {
  const values: Record<string, string> = {};
  for (const [key, value] of form.entries()) if (typeof value === "string") values[key] = value;
  return values;
}

export function parseForm<S extends z.ZodType>(schema: S, form: FormData): FormResult<z.output<S>> {
  const values = formValues(form);
  const parsed = schema.safeParse(values);
  if (parsed.success) return { ok: true, data: parsed.data };
  const errors: FieldErrors = {};
  for (const issue of parsed.error.issues) {
    const field = String(issue.path[0] ?? "form");
    errors[field] ??= issue.message;
  }
  return { ok: false, errors, values };
}

// A labelled form control with its error beside it; keeps what was entered.
import { useId } from "react";
import { Link } from "react-router";

type Common = { label: string; name: string; error?: string; hint?: string; className?: string };

function Frame({ id, label, error, hint, className, children }: Common & { id: string; children: React.ReactNode }) {
  return (
    <div className={className}>
      <label htmlFor={id} className="mb-1.5 block text-sm font-medium text-ink">
        {label}
      </label>
      {children}
      {error ? (
        <p id={`${id}-error`} className="mt-1.5 text-sm text-danger" role="alert">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="mt-1.5 text-sm text-ink-faint">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

export function TextField({ defaultValue, type = "text", ...props }: Common & { defaultValue?: string; type?: string } & Omit<React.InputHTMLAttributes<HTMLInputElement>, "name" | "defaultValue">) {
  const id = useId();
  const { label, name, error, hint, className, ...input } = props;
  return (
    <Frame id={id} label={label} name={name} error={error} hint={hint} className={className}>
      <input
        {...input}
        id={id}
        name={name}
        type={type}
        defaultValue={defaultValue}
        className="field-input"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : hint ? `${id}-hint` : undefined}
      />
    </Frame>
  );
}

export function SelectField({
  options,
  defaultValue,
  placeholder,
  ...props
}: Common & { options: readonly { value: string; label: string }[]; defaultValue?: string; placeholder?: string }) {
  const id = useId();
  const { label, name, error, hint, className } = props;
  return (
    <Frame id={id} label={label} name={name} error={error} hint={hint} className={className}>
      <select
        id={id}
        name={name}
        defaultValue={defaultValue ?? ""}
        className="field-input"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `${id}-error` : undefined}
      >
        {placeholder !== undefined && <option value="">{placeholder}</option>}
        {options.map((option) => (
          <option key={option.value} value={option.value}>
            {option.label}
          </option>
        ))}
      </select>
    </Frame>
  );
}

export function FormNotice({ message, tone = "danger" }: { message?: string; tone?: "danger" | "info" }) {
  if (!message) return null;
  const colours = tone === "danger" ? "border-danger/40 bg-danger-wash text-danger" : "border-accent/30 bg-accent-wash text-accent-deep";
  return (
    <p className={`rounded-md border px-3 py-2 text-sm ${colours}`} role={tone === "danger" ? "alert" : "status"}>
      {message}
    </p>
  );
}

/** A form's submit button and its way out. */
export function FormActions({ submitLabel, cancelTo, className = "flex flex-wrap gap-2 pt-1" }: { submitLabel: string; cancelTo: string; className?: string }) {
  return (
    <div className={className}>
      <button type="submit" className="btn-primary">
        {submitLabel}
      </button>
      <Link to={cancelTo} className="btn-quiet">
        Cancel
      </Link>
    </div>
  );
}

import type { ReactNode } from "react";

// Accessible form fields: a label, the control, and its error wired with aria-describedby.
interface BaseProps {
  name: string;
  label: string;
  error?: string;
  hint?: string;
}

function describedBy(name: string, error?: string, hint?: string) {
  return [hint ? `${name}-hint` : null, error ? `${name}-error` : null].filter(Boolean).join(" ") || undefined;
}

function Extras({ name, error, hint }: { name: string; error?: string; hint?: string }) {
  return (
    <>
      {hint && (
        <p id={`${name}-hint`} className="mt-1 text-sm text-ink-soft">
          {hint}
        </p>
      )}
      {error && (
        <p id={`${name}-error`} className="field-error">
          {error}
        </p>
      )}
    </>
  );
}

export function TextField(
  props: BaseProps & { type?: string; defaultValue?: string; required?: boolean; autoComplete?: string },
) {
  const { name, label, error, hint, type = "text", defaultValue, required, autoComplete } = props;
  return (
    <div>
      <label htmlFor={name} className="field-label">
        {label}
        {required && <span aria-hidden="true"> *</span>}
      </label>
      <input
        id={name}
        name={name}
        type={type}
        defaultValue={defaultValue}
        required={required}
        autoComplete={autoComplete}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(name, error, hint)}
        className="field-input"
      />
      <Extras name={name} error={error} hint={hint} />
    </div>
  );
}

export function TextArea(props: BaseProps & { defaultValue?: string; required?: boolean; rows?: number }) {
  const { name, label, error, hint, defaultValue, required, rows = 5 } = props;
  return (
    <div>
      <label htmlFor={name} className="field-label">
        {label}
        {required && <span aria-hidden="true"> *</span>}
      </label>
      <textarea
        id={name}
        name={name}
        rows={rows}
        defaultValue={defaultValue}
        required={required}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(name, error, hint)}
        className="field-input"
      />
      <Extras name={name} error={error} hint={hint} />
    </div>
  );
}

export function SelectField(
  props: BaseProps & {
    options: { value: string; label: string }[];
    defaultValue?: string;
    required?: boolean;
    multiple?: boolean;
    children?: ReactNode;
  },
) {
  const { name, label, error, hint, options, defaultValue, required, multiple } = props;
  return (
    <div>
      <label htmlFor={name} className="field-label">
        {label}
        {required && <span aria-hidden="true"> *</span>}
      </label>
      <select
        id={name}
        name={name}
        defaultValue={defaultValue}
        required={required}
        multiple={multiple}
        aria-invalid={error ? true : undefined}
        aria-describedby={describedBy(name, error, hint)}
        className="field-input"
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      <Extras name={name} error={error} hint={hint} />
    </div>
  );
}

export function FormError({ message }: { message?: string }) {
  if (!message) return null;
  return (
    <p role="alert" className="rounded-md bg-alert-wash p-3 text-alert">
      {message}
    </p>
  );
}

export function Notice({ children }: { children: ReactNode }) {
  return (
    <p role="status" className="rounded-md bg-spruce-50 p-3 text-spruce-800">
      {children}
    </p>
  );
}

import { getFormProps, useForm } from "@conform-to/react";
import { type ComponentProps, createContext, type ReactNode, useContext, useId } from "react";
import { Form } from "react-router";
import type { ActionResult } from "~/schemas/form";

// Accessible forms. `ActionForm` posts one form (its `intent`) and reads the action's result with
// conform: errors go to the fields by name, focus moves to the first invalid field. Each field takes
// its ids from `useId`, so the same component serves any page, however many forms it has.

const FieldErrors = createContext<Record<string, string[] | undefined>>({});

type ActionFormProps = Omit<ComponentProps<typeof Form>, "id" | "onSubmit" | "noValidate"> & {
  /** Which form of the page this is; sent as the `intent` field and matched against the result. */
  intent?: string;
  /** The route's action data; shown only when it answers this form's intent. */
  result?: ActionResult<unknown> | null;
  /** For several forms with one intent (one per row): the hidden values that tell this one apart. */
  match?: Record<string, string>;
  /** Show the success notice at the end of the form (for forms in rows, where a page notice is far away). */
  notice?: boolean;
};

function answers(result: ActionResult<unknown>, intent?: string, match?: Record<string, string>): boolean {
  if (intent !== undefined && result.intent !== intent) return false;
  const sent = (result.result.initialValue ?? {}) as Record<string, unknown>;
  return Object.entries(match ?? {}).every(([k, v]) => sent[k] === v);
}

export function ActionForm({ intent, result, match, notice, children, method = "post", ...rest }: ActionFormProps) {
  const mine = result && answers(result, intent, match) ? result.result : undefined;
  const [form] = useForm({ lastResult: mine });
  const errors = form.allErrors;
  const formErrors = [...(form.errors ?? []), ...(errors.intent ?? [])];
  return (
    <FieldErrors.Provider value={errors}>
      <Form method={method} {...getFormProps(form)} {...rest}>
        {intent !== undefined && <input type="hidden" name="intent" value={intent} />}
        {formErrors.length > 0 && (
          <div className="col-span-full">
            <FormError message={formErrors.join(" ")} />
          </div>
        )}
        {children}
        {notice && mine?.status === "success" && result?.notice && <Notice>{result.notice}</Notice>}
      </Form>
    </FieldErrors.Provider>
  );
}

/**
 * Every error of one intent's result as a single alert: for small row-action forms (a button per row)
 * whose errors belong above the list rather than beside each button.
 */
export function ActionErrors({ result, intent }: { result?: ActionResult<unknown> | null; intent: string }) {
  if (!result || result.intent !== intent) return null;
  const messages = Object.values(result.result.error ?? {}).flatMap((m) => m ?? []);
  return <FormError message={messages.join(" ") || undefined} />;
}

/**
 * The success notice of an action, if any (only for `intent`, when given). Without an intent it also
 * shows a refused intent, which no form on the page answers to.
 */
export function ActionNotice({ result, intent }: { result?: ActionResult<unknown> | null; intent?: string }) {
  if (!result) return null;
  const refused = intent === undefined ? result.result.error?.intent : undefined;
  if (refused?.length) return <FormError message={refused.join(" ")} />;
  if (!result.notice || (intent !== undefined && result.intent !== intent)) return null;
  return <Notice>{result.notice}</Notice>;
}

interface BaseProps {
  name: string;
  label: string;
  /** An error from outside an ActionForm; inside one, the action's result provides it. */
  error?: string;
  hint?: string;
}

/** Ids, error and aria wiring of one field, for a control a page lays out itself. */
export function useFieldWiring(name: string, error: string | undefined, hint: string | undefined) {
  const id = useId();
  const fromForm = useContext(FieldErrors)[name]?.[0];
  const message = error ?? fromForm;
  const describedBy = [hint ? `${id}-hint` : null, message ? `${id}-error` : null].filter(Boolean).join(" ");
  return {
    id,
    message,
    aria: { "aria-invalid": message ? true : undefined, "aria-describedby": describedBy || undefined },
  };
}

function Label({ id, label, required }: { id: string; label: string; required?: boolean }) {
  return (
    <label htmlFor={id} className="field-label">
      {label}
      {required && <span aria-hidden="true"> *</span>}
    </label>
  );
}

function Extras({ id, message, hint }: { id: string; message?: string; hint?: string }) {
  return (
    <>
      {hint && (
        <p id={`${id}-hint`} className="mt-1 text-sm text-ink-soft">
          {hint}
        </p>
      )}
      {message && (
        <p id={`${id}-error`} className="field-error">
          {message}
        </p>
      )}
    </>
  );
}

export function TextField(
  props: BaseProps & {
    type?: string;
    defaultValue?: string;
    required?: boolean;
    autoComplete?: string;
    inputMode?: "numeric" | "decimal";
    step?: string;
    /** The id of a <datalist> of suggestions. */
    list?: string;
  },
) {
  const {
    name,
    label,
    error,
    hint,
    type = "text",
    defaultValue,
    required,
    autoComplete,
    inputMode,
    step,
    list,
  } = props;
  const f = useFieldWiring(name, error, hint);
  return (
    <div>
      <Label id={f.id} label={label} required={required} />
      <input
        id={f.id}
        name={name}
        type={type}
        defaultValue={defaultValue}
        required={required}
        autoComplete={autoComplete}
        inputMode={inputMode}
        step={step}
        list={list}
        {...f.aria}
        className="field-input"
      />
      <Extras id={f.id} message={f.message} hint={hint} />
    </div>
  );
}

export function TextArea(props: BaseProps & { defaultValue?: string; required?: boolean; rows?: number }) {
  const { name, label, error, hint, defaultValue, required, rows = 5 } = props;
  const f = useFieldWiring(name, error, hint);
  return (
    <div>
      <Label id={f.id} label={label} required={required} />
      <textarea
        id={f.id}
        name={name}
        rows={rows}
        defaultValue={defaultValue}
        required={required}
        {...f.aria}
        className="field-input"
      />
      <Extras id={f.id} message={f.message} hint={hint} />
    </div>
  );
}

export function SelectField(
  props: BaseProps & {
    options: { value: string; label: string }[];
    defaultValue?: string | string[];
    required?: boolean;
    multiple?: boolean;
    /** Rows shown at once (a multiple select). */
    size?: number;
    children?: ReactNode;
  },
) {
  const { name, label, error, hint, options, defaultValue, required, multiple, size } = props;
  const f = useFieldWiring(name, error, hint);
  return (
    <div>
      <Label id={f.id} label={label} required={required} />
      <select
        id={f.id}
        name={name}
        defaultValue={defaultValue}
        required={required}
        multiple={multiple}
        size={size}
        {...f.aria}
        className="field-input"
      >
        {options.map((o) => (
          <option key={o.value} value={o.value}>
            {o.label}
          </option>
        ))}
      </select>
      <Extras id={f.id} message={f.message} hint={hint} />
    </div>
  );
}

export function CheckboxField(props: BaseProps & { defaultChecked?: boolean; value?: string; required?: boolean }) {
  const { name, label, error, hint, defaultChecked, value, required } = props;
  const f = useFieldWiring(name, error, hint);
  return (
    <div>
      <div className="flex items-center gap-2">
        <input
          id={f.id}
          name={name}
          type="checkbox"
          value={value}
          defaultChecked={defaultChecked}
          required={required}
          {...f.aria}
          className="size-5"
        />
        <label htmlFor={f.id} className="field-label">
          {label}
        </label>
      </div>
      <Extras id={f.id} message={f.message} hint={hint} />
    </div>
  );
}

/** A set of checkboxes sharing one name (several values), with one legend and one error. */
export function CheckboxGroup(props: {
  name: string;
  legend: string;
  options: { value: string; label: ReactNode }[];
  defaultValues?: string[];
  error?: string;
  hint?: string;
  children?: ReactNode;
}) {
  const { name, legend, options, defaultValues = [], error, hint, children } = props;
  const f = useFieldWiring(name, error, hint);
  return (
    <fieldset aria-describedby={f.aria["aria-describedby"]}>
      <legend className="field-label">{legend}</legend>
      {children}
      <div className="mt-1 grid gap-1 sm:grid-cols-2">
        {options.map((o) => (
          <label key={o.value} className="flex min-h-11 items-center gap-2 rounded-md border border-line px-3">
            <input
              type="checkbox"
              name={name}
              value={o.value}
              defaultChecked={defaultValues.includes(o.value)}
              aria-invalid={f.aria["aria-invalid"]}
              className="h-5 w-5"
            />
            <span>{o.label}</span>
          </label>
        ))}
      </div>
      <Extras id={f.id} message={f.message} hint={hint} />
    </fieldset>
  );
}

/** One choice among a few, as large radio buttons (touch-friendly), with a legend and one error. */
export function RadioGroup(props: {
  name: string;
  legend: string;
  options: { value: string; label: ReactNode }[];
  defaultValue?: string;
  error?: string;
  className?: string;
  children?: ReactNode;
}) {
  const { name, legend, options, defaultValue, error, className, children } = props;
  const f = useFieldWiring(name, error, undefined);
  return (
    <fieldset className={className} aria-describedby={f.aria["aria-describedby"]}>
      <legend className="font-medium">{legend}</legend>
      <div className="flex flex-wrap gap-2">
        {options.map((o) => (
          <label
            key={o.value}
            className="flex min-h-12 min-w-24 cursor-pointer items-center gap-2 rounded-md border border-line px-3 has-[:checked]:border-spruce-700 has-[:checked]:bg-spruce-50"
          >
            <input
              type="radio"
              name={name}
              value={o.value}
              defaultChecked={o.value === defaultValue}
              aria-invalid={f.aria["aria-invalid"]}
              className="size-5"
            />
            <span>{o.label}</span>
          </label>
        ))}
      </div>
      <Extras id={f.id} message={f.message} />
      {children}
    </fieldset>
  );
}

/** The message for a name that has no control of its own (e.g. a duration computed from two fields). */
export function FieldMessage({ name, className }: { name: string; className?: string }) {
  const message = useContext(FieldErrors)[name]?.[0];
  return message ? <p className={`field-error ${className ?? ""}`}>{message}</p> : null;
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

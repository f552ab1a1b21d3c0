import { useFieldWiring } from "./fields";

// A labelled file field with the accepted types and size limit spelled out; inside an ActionForm the
// action's error at its name shows beneath it.
export function FileField({
  name,
  label,
  accept,
  maxBytes,
  error,
  required,
}: {
  name: string;
  label: string;
  accept: string;
  maxBytes: number;
  error?: string;
  required?: boolean;
}) {
  const mb = Math.round(maxBytes / 1024 / 1024);
  const hint = `${accept.split(",").join(" or ")}, at most ${mb} MB.`;
  const f = useFieldWiring(name, error, hint);
  return (
    <div>
      <label htmlFor={f.id} className="field-label">
        {label}
        {required && <span aria-hidden="true"> *</span>}
      </label>
      <input
        id={f.id}
        name={name}
        type="file"
        accept={accept}
        required={required}
        {...f.aria}
        className="field-input file:mr-3 file:rounded file:border-0 file:bg-spruce-50 file:px-3 file:py-1"
      />
      <p id={`${f.id}-hint`} className="mt-1 text-sm text-ink-soft">
        {hint}
      </p>
      {f.message && (
        <p id={`${f.id}-error`} className="field-error">
          {f.message}
        </p>
      )}
    </div>
  );
}

export interface IssueLike {
  row?: number;
  column?: string;
  field?: string;
  message: string;
}

/** A list of file problems, each naming the row and column/field. */
export function IssueList({ issues, title }: { issues: IssueLike[]; title: string }) {
  if (issues.length === 0) return null;
  return (
    <div
      role="alert"
      className="rounded-md border border-alert/30 bg-alert-wash p-3 text-alert"
      data-testid="issue-list"
    >
      <p className="font-semibold">{title}</p>
      <ul className="mt-2 list-disc pl-5 text-sm">
        {issues.map((i, n) => (
          // biome-ignore lint/suspicious/noArrayIndexKey: a fixed list of problems for one upload, never reordered
          <li key={n}>
            {i.row != null && <span className="font-medium">Row {i.row}</span>}
            {(i.column ?? i.field) && (
              <span className="font-medium">
                {i.row != null ? ", " : ""}
                {i.column ?? i.field}
              </span>
            )}
            {(i.row != null || i.column || i.field) && ": "}
            {i.message}
          </li>
        ))}
      </ul>
    </div>
  );
}

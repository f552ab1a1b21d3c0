import { Form } from "react-router";
import type { ActionResult } from "~/schemas/form";
import { ActionErrors, ActionForm, ActionNotice, TextField } from "./fields";

/** Adding a leave period (trainer or trainee), with the outcome of that and of removing one. */
export function LeaveForm({ result }: { result?: ActionResult<unknown> | null }) {
  return (
    <>
      <ActionErrors result={result} intent="remove-leave" />
      <ActionNotice result={result} intent="remove-leave" />
      <ActionForm intent="add-leave" result={result} className="grid gap-3 md:grid-cols-4 md:items-end">
        <TextField name="startsOn" label="From" type="date" />
        <TextField name="endsOn" label="To (inclusive)" type="date" />
        <TextField name="reason" label="Reason (optional)" />
        <button className="btn-quiet" type="submit">
          Add leave
        </button>
      </ActionForm>
      <ActionNotice result={result} intent="add-leave" />
    </>
  );
}

/** A person's leave periods (trainer or trainee), each with its remove button, and the form to add one. */
export function LeaveSection({
  heading,
  leave,
  result,
}: {
  heading: string;
  leave: { id: number; startsOn: string; endsOn: string; reason: string }[];
  result?: ActionResult<unknown> | null;
}) {
  return (
    <section aria-labelledby="leave" className="card grid gap-3">
      <h2 id="leave" className="text-lg font-semibold">
        {heading}
      </h2>
      <ul className="grid gap-1">
        {leave.map((l) => (
          <li key={l.id} className="flex flex-wrap items-center gap-2">
            <span>
              {l.startsOn} – {l.endsOn}
              {l.reason ? `: ${l.reason}` : ""}
            </span>
            <Form method="post">
              <input type="hidden" name="intent" value="remove-leave" />
              <input type="hidden" name="id" value={l.id} />
              <button
                className="text-sm text-alert underline"
                type="submit"
                aria-label={`Remove leave ${l.startsOn} to ${l.endsOn}`}
              >
                Remove
              </button>
            </Form>
          </li>
        ))}
      </ul>
      <LeaveForm result={result} />
    </section>
  );
}

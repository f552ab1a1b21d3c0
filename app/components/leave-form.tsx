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

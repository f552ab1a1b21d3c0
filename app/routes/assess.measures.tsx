import { Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, SelectField, TextArea, TextField } from "~/components/fields";
import { TRACE_KINDS } from "~/compute/trace-parsing";
import { formAction } from "~/forms.server";
import { createMeasure, listMeasures, setMeasureActive } from "~/models/measures.server";
import { measuresFormSchema, scorableOutputs, TRACE_KIND_LABELS } from "~/schemas/assessment";
import type { Route } from "./+types/assess.measures";

export const meta: Route.MetaFunction = () => [{ title: "Baseline measures · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request, "assessments.read");
  return {
    measures: await listMeasures(),
    outputs: Object.fromEntries(TRACE_KINDS.map((k) => [k, scorableOutputs(k)])),
  };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "norms.manage");
  return formAction(await request.formData(), measuresFormSchema, async (v) => {
    if (v.intent === "toggle") {
      await setMeasureActive(v.id, v.active);
      return v.active ? "Measure switched on." : "Measure switched off; stored results stay.";
    }
    await createMeasure({ ...v, traceKind: v.traceKind || undefined }, p.user.id);
    return `Measure ${v.name} added.`;
  });
}

export default function Measures({ loaderData }: Route.ComponentProps) {
  const { measures, outputs } = loaderData;
  const r = useActionData<typeof action>();
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Baseline measures</h1>
        <p className="text-ink-soft">
          The battery: standardised tests entered by hand, and measures computed from uploaded traces.
        </p>
      </div>
      <ActionNotice result={r} />
      <div className="card overflow-x-auto p-0">
        <table className="table-base">
          <caption className="sr-only">Measures</caption>
          <thead>
            <tr>
              <th scope="col">Measure</th>
              <th scope="col">Code</th>
              <th scope="col">Unit</th>
              <th scope="col">Better</th>
              <th scope="col">Entry</th>
              <th scope="col">Status</th>
            </tr>
          </thead>
          <tbody>
            {measures.map((m) => (
              <tr key={m.id}>
                <th scope="row" className="font-normal">
                  {m.name}
                </th>
                <td>
                  <code>{m.code}</code>
                </td>
                <td>{m.unit}</td>
                <td>{m.higherIsBetter ? "higher" : "lower"}</td>
                <td>{m.entry === "trace" ? `trace: ${m.traceKind}` : "manual"}</td>
                <td>
                  <Form method="post">
                    <input type="hidden" name="intent" value="toggle" />
                    <input type="hidden" name="id" value={m.id} />
                    <input type="hidden" name="active" value={String(!m.active)} />
                    <button
                      type="submit"
                      className="btn-quiet min-h-9 px-2 py-1 text-xs"
                      aria-label={`${m.active ? "Switch off" : "Switch on"} ${m.name}`}
                    >
                      {m.active ? "Active: switch off" : "Off: switch on"}
                    </button>
                  </Form>
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <section className="card" aria-labelledby="add-m">
        <h2 id="add-m" className="text-lg font-semibold">
          Add a measure
        </h2>
        <ActionForm intent="create" result={r} className="mt-3 grid gap-4 sm:grid-cols-2">
          <TextField name="name" label="Name" required />
          <TextField
            name="code"
            label="Code"
            required
            hint="Manual: e.g. pegboard.right. Trace: one of the outputs listed below."
          />
          <TextField name="unit" label="Unit" required />
          <SelectField
            name="direction"
            label="Better is"
            required
            options={[
              { value: "higher", label: "higher" },
              { value: "lower", label: "lower" },
            ]}
          />
          <SelectField
            name="entry"
            label="Entry"
            required
            options={[
              { value: "manual", label: "Manual score" },
              { value: "trace", label: "Computed from a trace" },
            ]}
          />
          <SelectField
            name="traceKind"
            label="Trace format (trace measures)"
            options={[
              { value: "", label: "— manual —" },
              ...TRACE_KINDS.map((k) => ({ value: k, label: TRACE_KIND_LABELS[k] })),
            ]}
          />
          <div className="sm:col-span-2">
            <TextArea name="description" label="Description (optional)" rows={2} />
          </div>
          <div className="sm:col-span-2">
            <button type="submit" className="btn-primary">
              Add measure
            </button>
          </div>
        </ActionForm>
        <details className="mt-4 text-sm">
          <summary className="cursor-pointer text-spruce-700">Trace outputs that can be scored</summary>
          <ul className="mt-2 grid gap-1">
            {Object.entries(outputs).flatMap(([k, list]) =>
              list.map((o) => (
                <li key={o.key}>
                  <code>{o.key}</code> ({k}): {o.label}, {o.unit}, {o.higherIsBetter ? "higher" : "lower"} is better
                </li>
              )),
            )}
          </ul>
        </details>
      </section>
    </div>
  );
}

import { data, Form, useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { FormError, Notice, SelectField, TextArea, TextField } from "~/components/fields";
import { listMeasures } from "~/models/measures.server";
import {
  createCohortNormSet,
  createPublishedNormSet,
  listNormSets,
  MIN_COHORT_N,
  NormInputError,
} from "~/models/norms.server";
import { sitesInScope } from "~/models/sites.server";
import { cohortNormSchema, normValuesFromForm, publishedNormSchema } from "~/schemas/assessment";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/assess.norms";

export const meta: Route.MetaFunction = () => [{ title: "Norm sets · Limberly" }];

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "assessments.read");
  const [normSets, measures, sites] = await Promise.all([
    listNormSets(),
    listMeasures({ activeOnly: true }),
    sitesInScope(p.scope),
  ]);
  return { normSets, measures, sites, minCohortN: MIN_COHORT_N };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "norms.manage");
  const form = formToObject(await request.formData());
  if (form.intent === "cohort") {
    const v = parseWith(cohortNormSchema, form);
    if (!v.ok) return data({ intent: "cohort", errors: v.errors, done: null }, { status: 400 });
    const sites = await sitesInScope(p.scope);
    const site = v.data.siteId ? sites.find((s) => s.id === v.data.siteId) : null;
    if (v.data.siteId && !site)
      return data(
        { intent: "cohort", errors: { siteId: "Site: choose one of your sites." }, done: null },
        { status: 400 },
      );
    try {
      const r = await createCohortNormSet(
        {
          name: v.data.name,
          siteId: site?.id ?? null,
          siteIds: sites.map((s) => s.id),
          siteLabel: site ? site.name : sites.map((s) => s.name).join(", "),
        },
        p.user.id,
      );
      return {
        intent: "cohort",
        errors: null,
        done: `Cohort norm set saved with ${r.measures} measure(s). New results are scored against it.`,
      };
    } catch (e) {
      if (e instanceof NormInputError)
        return data({ intent: "cohort", errors: { _form: e.message }, done: null }, { status: 400 });
      throw e;
    }
  }
  const head = parseWith(publishedNormSchema, form);
  const vals = normValuesFromForm(form, await listMeasures({ activeOnly: true }));
  if (!head.ok || !vals.ok)
    return data(
      { intent: "published", errors: { ...(head.ok ? {} : head.errors), ...(vals.ok ? {} : vals.errors) }, done: null },
      { status: 400 },
    );
  await createPublishedNormSet({ ...head.data, values: vals.values }, p.user.id);
  return { intent: "published", errors: null, done: `Published norm set ${head.data.name} saved.` };
}

export default function Norms({ loaderData }: Route.ComponentProps) {
  const { normSets, measures, sites, minCohortN } = loaderData;
  const r = useActionData<typeof action>();
  const errors = (r?.errors ?? {}) as Record<string, string>;
  const mName = new Map(measures.map((m) => [m.id, m.name]));
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Norm sets</h1>
        <p className="text-ink-soft">
          Mean and SD per measure. Every z-score records the norm set it used; by default a result is scored against the
          most recent norm set holding its measure.
        </p>
      </div>
      {r?.done && <Notice>{r.done}</Notice>}
      {normSets.map((n) => (
        <article key={n.id} className="card">
          <h2 className="font-semibold">
            {n.name}{" "}
            <span className="text-sm font-normal text-ink-soft">
              · {n.origin === "cohort" ? "from our cohort" : "published"} · {n.sourceDate}
            </span>
          </h2>
          <p className="text-sm text-ink-soft">{n.source}</p>
          <div className="overflow-x-auto">
            <table className="table-base mt-2">
              <caption className="sr-only">Values of {n.name}</caption>
              <thead>
                <tr>
                  <th scope="col">Measure</th>
                  <th scope="col">Mean</th>
                  <th scope="col">SD</th>
                  <th scope="col">n</th>
                </tr>
              </thead>
              <tbody>
                {n.values.map((v) => (
                  <tr key={v.measureId}>
                    <th scope="row" className="font-normal">
                      {mName.get(v.measureId) ?? `measure ${v.measureId} (inactive)`}
                    </th>
                    <td>{v.mean.toPrecision(4)}</td>
                    <td>{v.sd.toPrecision(3)}</td>
                    <td>{v.n ?? "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </article>
      ))}
      <section className="card" aria-labelledby="cohort-h">
        <h2 id="cohort-h" className="text-lg font-semibold">
          Derive norms from our consented cohort
        </h2>
        <p className="text-sm text-ink-soft">
          Uses each worker's first baseline; a measure needs at least {minCohortN} workers.
        </p>
        {r?.intent === "cohort" && <FormError message={errors._form} />}
        <Form method="post" className="mt-3 grid gap-3 sm:grid-cols-2">
          <input type="hidden" name="intent" value="cohort" />
          <TextField name="name" label="Name" required error={r?.intent === "cohort" ? errors.name : undefined} />
          <SelectField
            name="siteId"
            label="Cohort"
            error={r?.intent === "cohort" ? errors.siteId : undefined}
            options={[
              { value: "", label: "All my sites" },
              ...sites.map((s) => ({ value: String(s.id), label: s.name })),
            ]}
          />
          <div className="sm:col-span-2">
            <button type="submit" className="btn-primary">
              Compute and save
            </button>
          </div>
        </Form>
      </section>
      <section className="card" aria-labelledby="pub-h">
        <h2 id="pub-h" className="text-lg font-semibold">
          Enter a published norm table
        </h2>
        {r?.intent === "published" && <FormError message={errors._form} />}
        <Form method="post" className="mt-3 grid gap-3" noValidate>
          <input type="hidden" name="intent" value="published" />
          <div className="grid gap-3 sm:grid-cols-2">
            <TextField name="name" label="Name" required error={r?.intent === "published" ? errors.name : undefined} />
            <TextField
              name="sourceDate"
              label="Date of the source"
              type="date"
              required
              error={r?.intent === "published" ? errors.sourceDate : undefined}
            />
          </div>
          <TextArea
            name="source"
            label="Source (authors, year, title, table)"
            rows={2}
            required
            error={r?.intent === "published" ? errors.source : undefined}
          />
          <fieldset className="grid gap-2">
            <legend className="field-label">Values (leave a measure blank to skip it)</legend>
            {measures.map((m) => (
              <div key={m.id} className="grid grid-cols-3 gap-2 border-b border-line pb-2">
                <p className="col-span-3 text-sm font-medium">
                  {m.name} ({m.unit})
                </p>
                <TextField name={`mean.${m.id}`} label="Mean" error={errors[`mean.${m.id}`]} />
                <TextField name={`sd.${m.id}`} label="SD" error={errors[`sd.${m.id}`]} />
                <TextField name={`n.${m.id}`} label="n" error={errors[`n.${m.id}`]} />
              </div>
            ))}
          </fieldset>
          <div>
            <button type="submit" className="btn-primary">
              Save published norms
            </button>
          </div>
        </Form>
      </section>
    </div>
  );
}

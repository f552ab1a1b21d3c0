import { useActionData } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { ActionForm, ActionNotice, SelectField, TextArea, TextField } from "~/components/fields";
import { UserError } from "~/errors";
import { formAction } from "~/forms.server";
import { listMeasures } from "~/models/measures.server";
import { createCohortNormSet, createPublishedNormSet, listNormSets, MIN_COHORT_N } from "~/models/norms.server";
import { sitesInScope } from "~/models/sites.server";
import { normsPageSchema, normValues } from "~/schemas/assessment";
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
  const measures = await listMeasures({ activeOnly: true });
  return formAction(await request.formData(), normsPageSchema(measures), async (v) => {
    if (v.intent === "cohort") {
      const sites = await sitesInScope(p.scope);
      const site = v.siteId ? sites.find((s) => s.id === v.siteId) : null;
      if (v.siteId && !site) throw new UserError("Site: choose one of your sites.", { field: "siteId" });
      const r = await createCohortNormSet(
        {
          name: v.name,
          siteId: site?.id ?? null,
          siteIds: sites.map((s) => s.id),
          siteLabel: site ? site.name : sites.map((s) => s.name).join(", "),
        },
        p.user.id,
      );
      return `Cohort norm set saved with ${r.measures} measure(s). New results are scored against it.`;
    }
    const { values } = normValues(v, measures);
    await createPublishedNormSet({ name: v.name, source: v.source, sourceDate: v.sourceDate, values }, p.user.id);
    return `Published norm set ${v.name} saved.`;
  });
}

export default function Norms({ loaderData }: Route.ComponentProps) {
  const { normSets, measures, sites, minCohortN } = loaderData;
  const r = useActionData<typeof action>();
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
      <ActionNotice result={r} />
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
        <ActionForm intent="cohort" result={r} className="mt-3 grid gap-3 sm:grid-cols-2">
          <TextField name="name" label="Name" required />
          <SelectField
            name="siteId"
            label="Cohort"
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
        </ActionForm>
      </section>
      <section className="card" aria-labelledby="pub-h">
        <h2 id="pub-h" className="text-lg font-semibold">
          Enter a published norm table
        </h2>
        <ActionForm intent="published" result={r} className="mt-3 grid gap-3">
          <div className="grid gap-3 sm:grid-cols-2">
            <TextField name="name" label="Name" required />
            <TextField name="sourceDate" label="Date of the source" type="date" required />
          </div>
          <TextArea name="source" label="Source (authors, year, title, table)" rows={2} required />
          <fieldset className="grid gap-2">
            <legend className="field-label">Values (leave a measure blank to skip it)</legend>
            {measures.map((m) => (
              <div key={m.id} className="grid grid-cols-3 gap-2 border-b border-line pb-2">
                <p className="col-span-3 text-sm font-medium">
                  {m.name} ({m.unit})
                </p>
                <TextField name={`mean.${m.id}`} label="Mean" />
                <TextField name={`sd.${m.id}`} label="SD" />
                <TextField name={`n.${m.id}`} label="n" />
              </div>
            ))}
          </fieldset>
          <div>
            <button type="submit" className="btn-primary">
              Save published norms
            </button>
          </div>
        </ActionForm>
      </section>
    </div>
  );
}

import { Form, Link, redirect, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { FormError, TextField } from "~/components/fields";
import { addDays, isoWeekday } from "~/compute/plan-calendar";
import { todayIn } from "~/dates";
import { getRunStatus, listRuns, startRun } from "~/models/allocation-runs.server";
import { planningChoices } from "~/models/fleet-admin.server";
import { planningQuantile } from "~/models/forecast.server";
import { planState } from "~/models/publish.server";
import { viewerTimeZone } from "~/models/sites.server";
import { runFormSchema } from "~/schemas/allocation";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/coordinate.runs._index";

export const meta: Route.MetaFunction = () => [{ title: "Allocation runs · Limberly" }];

function nextMonday(today: string): string {
  const wd = isoWeekday(today);
  return addDays(today, wd === 1 ? 7 : 8 - wd);
}

export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "allocation.run");
  const url = new URL(request.url);
  const fromId = Number(url.searchParams.get("from")) || null;
  const base = fromId ? await getRunStatus(p.scope, fromId) : null;
  const [runs, choices, quantile, plan] = await Promise.all([
    listRuns(p.scope),
    planningChoices(p.scope),
    planningQuantile(),
    planState(),
  ]);
  return { runs, choices, quantile, base, defaultStart: nextMonday(todayIn(await viewerTimeZone(p))), plan };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "allocation.run");
  const parsed = parseWith(runFormSchema, formToObject(await request.formData()));
  if (!parsed.ok) return { errors: parsed.errors };
  const started = await startRun(p, parsed.data);
  if (!started.ok) return { errors: { [started.field]: started.message } as Record<string, string> };
  return redirect(`/coordinate/runs/${started.id}`);
}

const STATUS_TEXT: Record<string, string> = { queued: "Queued", running: "Solving", done: "Done", failed: "Failed" };

export default function RunsIndex({ loaderData, actionData }: Route.ComponentProps) {
  const { runs, choices, quantile, base, defaultStart, plan } = loaderData;
  const errors = (actionData?.errors ?? {}) as Record<string, string>;
  const nav = useNavigation();
  const bp = base?.parameters;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title">Allocation runs</h1>
        <p className="text-ink-soft">
          An allocation run decides, over a horizon of weeks, who trains on which device type, when and with which
          trainer, so that the most valuable set of workers becomes ready first. Runs are decision support: nothing
          reaches anyone until a coordinator publishes one.
        </p>
        <p className="mt-1 text-sm">
          Published plan:{" "}
          {plan.runId ? (
            <>
              version {plan.version},{" "}
              <Link className="text-spruce-700 underline" to={`/coordinate/runs/${plan.runId}`}>
                run #{plan.runId}
              </Link>
              {plan.by ? ` by ${plan.by}` : ""}
            </>
          ) : (
            "none yet"
          )}
          .
        </p>
      </div>

      <section aria-labelledby="new-run" className="card grid gap-4">
        <h2 id="new-run" className="text-lg font-semibold">
          {base ? `New what-if run based on run #${base.id}` : "Start a run"}
        </h2>
        <Form method="post" className="grid gap-4" noValidate>
          <FormError message={errors._form} />
          {base && <input type="hidden" name="baseRunId" value={base.id} />}
          <div className="grid gap-4 md:grid-cols-3">
            <TextField
              name="label"
              label="Name (optional)"
              defaultValue={base ? `What-if of #${base.id}` : ""}
              error={errors.label}
            />
            <TextField
              name="startDate"
              label="Start date (a Monday)"
              type="date"
              required
              defaultValue={bp?.startDate ?? defaultStart}
              error={errors.startDate}
            />
            <TextField
              name="horizonWeeks"
              label="Horizon (weeks)"
              type="number"
              required
              defaultValue={String(bp?.horizonWeeks ?? 12)}
              error={errors.horizonWeeks}
              hint="1 to 26 weeks."
            />
            <TextField
              name="planningQuantile"
              label="Planning quantile (%)"
              type="number"
              required
              defaultValue={String(Math.round((bp?.planningQuantile ?? quantile) * 100))}
              error={errors.planningQuantile}
              hint="Hours needed = this percentile of each worker's forecast. Higher plans for slower learners."
            />
            <TextField
              name="fairnessShare"
              label="Fairness share per department (%)"
              type="number"
              required
              defaultValue={String(Math.round((bp?.fairnessShare ?? 0.2) * 100))}
              error={errors.fairnessShare}
              hint="Each department gets at least this share of its pool made ready, where capacity allows."
            />
          </div>
          <fieldset className="grid gap-3">
            <legend className="field-label">Pool</legend>
            <p className="text-sm text-ink-soft">
              Workers with planning consent in force and a forecast from an approved model. Leave both lists empty for
              all your sites.
            </p>
            <div className="grid gap-4 md:grid-cols-2">
              <div>
                <label htmlFor="siteIds" className="field-label">
                  Sites
                </label>
                <select
                  id="siteIds"
                  name="siteIds"
                  multiple
                  defaultValue={(bp?.pool.siteIds ?? []).map(String)}
                  className="field-input"
                  aria-describedby={errors.siteIds ? "siteIds-error" : undefined}
                  size={Math.min(4, choices.sites.length)}
                >
                  {choices.sites.map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.name}
                    </option>
                  ))}
                </select>
                {errors.siteIds && (
                  <p id="siteIds-error" className="field-error">
                    {errors.siteIds}
                  </p>
                )}
              </div>
              <div>
                <label htmlFor="departmentIds" className="field-label">
                  Departments
                </label>
                <select
                  id="departmentIds"
                  name="departmentIds"
                  multiple
                  defaultValue={(bp?.pool.departmentIds ?? []).map(String)}
                  className="field-input"
                  size={5}
                >
                  {choices.departments.map((d) => (
                    <option key={d.id} value={d.id}>
                      {d.name}
                    </option>
                  ))}
                </select>
              </div>
            </div>
            <label className="flex min-h-11 items-center gap-2">
              <input
                type="checkbox"
                name="includeProficientElsewhere"
                defaultChecked={bp?.pool.includeProficientElsewhere ?? false}
                className="h-5 w-5"
              />{" "}
              Include workers already proficient on another device type
            </label>
          </fieldset>
          <fieldset className="grid gap-3 rounded-md border border-line p-3">
            <legend className="field-label px-1">What-if changes (optional)</legend>
            <div className="grid gap-4 md:grid-cols-3">
              <div>
                <label htmlFor="addUnitDeviceTypeId" className="field-label">
                  Add units of device type
                </label>
                <select
                  id="addUnitDeviceTypeId"
                  name="addUnitDeviceTypeId"
                  className="field-input"
                  defaultValue={String(bp?.whatIf.addUnits[0]?.deviceTypeId ?? "")}
                  aria-describedby={errors.addUnitDeviceTypeId ? "addUnitDeviceTypeId-error" : undefined}
                >
                  <option value="">No extra units</option>
                  {choices.deviceTypes.map((d) => (
                    <option key={d.id} value={d.id}>
                      {d.name}
                    </option>
                  ))}
                </select>
                {errors.addUnitDeviceTypeId && (
                  <p id="addUnitDeviceTypeId-error" className="field-error">
                    {errors.addUnitDeviceTypeId}
                  </p>
                )}
              </div>
              <div>
                <label htmlFor="addUnitSiteId" className="field-label">
                  At site
                </label>
                <select
                  id="addUnitSiteId"
                  name="addUnitSiteId"
                  className="field-input"
                  defaultValue={String(bp?.whatIf.addUnits[0]?.siteId ?? "")}
                  aria-describedby={errors.addUnitSiteId ? "addUnitSiteId-error" : undefined}
                >
                  <option value="">—</option>
                  {choices.sites.map((s) => (
                    <option key={s.id} value={s.id}>
                      {s.name}
                    </option>
                  ))}
                </select>
                {errors.addUnitSiteId && (
                  <p id="addUnitSiteId-error" className="field-error">
                    {errors.addUnitSiteId}
                  </p>
                )}
              </div>
              <TextField
                name="addUnitCount"
                label="How many units"
                type="number"
                defaultValue={String(bp?.whatIf.addUnits[0]?.count ?? 1)}
                error={errors.addUnitCount}
                hint="30 bookable hours a week each."
              />
            </div>
            <div>
              <label htmlFor="removeTrainerIds" className="field-label">
                Leave out trainers
              </label>
              <select
                id="removeTrainerIds"
                name="removeTrainerIds"
                multiple
                className="field-input"
                size={4}
                defaultValue={(bp?.whatIf.removeTrainerIds ?? []).map(String)}
              >
                {choices.trainers.map((t) => (
                  <option key={t.id} value={t.id}>
                    {t.name}
                  </option>
                ))}
              </select>
            </div>
            <p className="text-sm text-ink-soft">
              A run that adds units is a what-if only: it cannot be published until the units exist. To change the
              horizon, change the field above.
            </p>
          </fieldset>
          <div>
            <button className="btn-primary" type="submit" disabled={nav.state === "submitting"}>
              {nav.state === "submitting" ? "Starting…" : "Start the run"}
            </button>
          </div>
        </Form>
      </section>

      <section aria-labelledby="runs" className="grid gap-2">
        <h2 id="runs" className="text-lg font-semibold">
          Runs
        </h2>
        {runs.length === 0 ? (
          <p className="text-ink-soft">No runs yet.</p>
        ) : (
          <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Allocation runs (scrolls sideways)">
            <table className="table-base">
              <caption className="sr-only">Allocation runs, newest first</caption>
              <thead>
                <tr>
                  <th scope="col">Run</th>
                  <th scope="col">Status</th>
                  <th scope="col">Ready / pool</th>
                  <th scope="col">Value (sum of priorities)</th>
                  <th scope="col">Start</th>
                  <th scope="col">Weeks</th>
                  <th scope="col">Quantile</th>
                  <th scope="col">Fairness</th>
                  <th scope="col">By</th>
                  <th scope="col">Published</th>
                </tr>
              </thead>
              <tbody>
                {runs.map((r) => (
                  <tr key={r.id}>
                    <th scope="row">
                      <Link className="font-medium text-spruce-700 underline" to={`/coordinate/runs/${r.id}`}>
                        #{r.id}
                        {r.label ? ` · ${r.label}` : ""}
                      </Link>
                    </th>
                    <td>
                      {STATUS_TEXT[r.status]}
                      {r.status === "running" ? ` (${Math.round(r.fraction * 100)} %)` : ""}
                    </td>
                    <td className="whitespace-nowrap" data-testid={`run-ready-${r.id}`}>
                      {r.summary ? `${r.summary.ready} / ${r.summary.pool}` : "—"}
                    </td>
                    <td data-testid={`run-value-${r.id}`}>{r.summary ? r.summary.value : "—"}</td>
                    <td>{r.parameters.startDate}</td>
                    <td>{r.parameters.horizonWeeks}</td>
                    <td>{Math.round(r.parameters.planningQuantile * 100)} %</td>
                    <td>{Math.round(r.parameters.fairnessShare * 100)} %</td>
                    <td>{r.createdBy ?? "API"}</td>
                    <td>{r.publishedAt ? `v${r.publishedPlanVersion}, ${r.publishedAt.slice(0, 10)}` : "—"}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </section>
        )}
      </section>
      <DeviceCautions compact />
    </div>
  );
}

import { Link, redirect, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, CheckboxField, FieldMessage, SelectField, TextField } from "~/components/fields";
import { addDays, isoWeekday } from "~/compute/plan-calendar";
import { todayIn } from "~/dates";
import { formAction } from "~/forms.server";
import { archivedCount, getRunStatus, listRuns, startRun } from "~/models/allocation-runs.server";
import { planningChoices } from "~/models/fleet-admin.server";
import { planningQuantile } from "~/models/forecast.server";
import { planState } from "~/models/publish.server";
import { viewerTimeZone } from "~/models/sites.server";
import { runFormSchema } from "~/schemas/allocation";
import { percentileLabel } from "~/schemas/forecast";
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
  const showArchived = url.searchParams.get("archived") === "show";
  const [runs, archived, choices, quantile, plan] = await Promise.all([
    listRuns(p.scope, 50, { includeArchived: showArchived }),
    archivedCount(p.scope),
    planningChoices(p.scope),
    planningQuantile(),
    planState(),
  ]);
  const canSetQuantile = can(p.user, "models.manage");
  return {
    runs,
    archived,
    showArchived,
    choices,
    quantile,
    canSetQuantile,
    base,
    defaultStart: nextMonday(todayIn(await viewerTimeZone(p))),
    plan,
  };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "allocation.run");
  return formAction(await request.formData(), runFormSchema, async (parameters) => {
    throw redirect(`/coordinate/runs/${await startRun(p, parameters)}`);
  });
}

const STATUS_TEXT: Record<string, string> = { queued: "Queued", running: "Solving", done: "Done", failed: "Failed" };

export default function RunsIndex({ loaderData, actionData }: Route.ComponentProps) {
  const { runs, archived, showArchived, choices, quantile, canSetQuantile, base, defaultStart, plan } = loaderData;
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
        <ActionForm result={actionData} className="grid gap-4">
          {base && <input type="hidden" name="baseRunId" value={base.id} />}
          <FieldMessage name="baseRunId" />
          <div className="grid gap-4 md:grid-cols-3">
            <TextField name="label" label="Name (optional)" defaultValue={base ? `What-if of #${base.id}` : ""} />
            <TextField
              name="startDate"
              label="Start date (a Monday)"
              type="date"
              required
              defaultValue={bp?.startDate ?? defaultStart}
            />
            <TextField
              name="horizonWeeks"
              label="Horizon (weeks)"
              type="number"
              required
              defaultValue={String(bp?.horizonWeeks ?? 12)}
              hint="1 to 26 weeks."
            />
            <div data-testid="run-planning-quantile">
              <p className="field-label">Planning figure</p>
              <p className="text-sm">
                Hours needed = the {percentileLabel(quantile)} of each worker's forecast: the organisation's setting,
                used by every run and by the forecasts' drift checks.{" "}
                {canSetQuantile ? (
                  <Link className="text-spruce-700 underline" to="/models#quantile-h">
                    Change it under Forecast models
                  </Link>
                ) : (
                  "An assessor changes it under Forecast models."
                )}
              </p>
            </div>
            <TextField
              name="fairnessShare"
              label="Fairness share per department (%)"
              type="number"
              required
              defaultValue={String(Math.round((bp?.fairnessShare ?? 0.2) * 100))}
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
              <SelectField
                name="siteIds"
                label="Sites"
                multiple
                defaultValue={(bp?.pool.siteIds ?? []).map(String)}
                size={Math.min(4, choices.sites.length)}
                options={choices.sites.map((s) => ({ value: String(s.id), label: s.name }))}
              />
              <SelectField
                name="departmentIds"
                label="Departments"
                multiple
                defaultValue={(bp?.pool.departmentIds ?? []).map(String)}
                size={5}
                options={choices.departments.map((d) => ({ value: String(d.id), label: d.name }))}
              />
            </div>
            <CheckboxField
              name="includeProficientElsewhere"
              label="Include workers already proficient on another device type"
              defaultChecked={bp?.pool.includeProficientElsewhere ?? false}
            />
          </fieldset>
          {plan.runId && (
            <fieldset className="grid gap-3 rounded-md border border-line p-3">
              <legend className="field-label px-1">Re-plan from the published plan</legend>
              <CheckboxField
                name="fromPublished"
                label="Keep people's published sessions unless a change forces them to move"
                defaultChecked={Boolean(bp?.fromPublished)}
              />
              <TextField
                name="keepWeight"
                label="Moving one person's sessions costs as much as one more person ready with priority"
                type="number"
                defaultValue={String(bp?.fromPublished?.keepWeight ?? 3)}
                hint="0 to 100. With 3, the plan moves someone's published sessions only when that makes more people ready than one priority-3 person is worth; leave, maintenance, a pause or withdrawal or a new priority always move them."
              />
            </fieldset>
          )}
          <fieldset className="grid gap-3 rounded-md border border-line p-3">
            <legend className="field-label px-1">What-if changes (optional)</legend>
            <div className="grid gap-4 md:grid-cols-3">
              <SelectField
                name="addUnitDeviceTypeId"
                label="Add units of device type"
                defaultValue={String(bp?.whatIf.addUnits[0]?.deviceTypeId ?? "")}
                options={[
                  { value: "", label: "No extra units" },
                  ...choices.deviceTypes.map((d) => ({ value: String(d.id), label: d.name })),
                ]}
              />
              <SelectField
                name="addUnitSiteId"
                label="At site"
                defaultValue={String(bp?.whatIf.addUnits[0]?.siteId ?? "")}
                options={[
                  { value: "", label: "—" },
                  ...choices.sites.map((s) => ({ value: String(s.id), label: s.name })),
                ]}
              />
              <TextField
                name="addUnitCount"
                label="How many units"
                type="number"
                defaultValue={String(bp?.whatIf.addUnits[0]?.count ?? 1)}
                hint="30 bookable hours a week each."
              />
            </div>
            <SelectField
              name="removeTrainerIds"
              label="Leave out trainers"
              multiple
              size={4}
              defaultValue={(bp?.whatIf.removeTrainerIds ?? []).map(String)}
              options={choices.trainers.map((t) => ({ value: String(t.id), label: t.name }))}
            />
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
        </ActionForm>
      </section>

      <section aria-labelledby="runs" className="grid gap-2">
        <h2 id="runs" className="text-lg font-semibold">
          Runs
        </h2>
        {archived > 0 && (
          <p className="text-sm">
            {showArchived ? (
              <Link className="text-spruce-700 underline" to="/coordinate/runs">
                Hide the {archived} archived run{archived === 1 ? "" : "s"}
              </Link>
            ) : (
              <Link className="text-spruce-700 underline" to="/coordinate/runs?archived=show">
                Show the {archived} archived run{archived === 1 ? "" : "s"}
              </Link>
            )}
          </p>
        )}
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
                  <th scope="col">Planning figure</th>
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
                      {r.archivedAt ? " · archived" : ""}
                    </td>
                    <td className="whitespace-nowrap" data-testid={`run-ready-${r.id}`}>
                      {r.summary ? `${r.summary.ready} / ${r.summary.pool}` : "—"}
                    </td>
                    <td data-testid={`run-value-${r.id}`}>{r.summary ? r.summary.value : "—"}</td>
                    <td>{r.parameters.startDate}</td>
                    <td>{r.parameters.horizonWeeks}</td>
                    <td>{percentileLabel(r.parameters.planningQuantile)}</td>
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

import { data, Form, Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { FormError, Notice } from "~/components/fields";
import { planningQuantile, setPlanningQuantile } from "~/models/forecast.server";
import { listModelVersions } from "~/models/model-versions.server";
import { listCriteria, setCriterion, UnknownDeviceTypeError } from "~/models/proficiency.server";
import {
  criterionFormSchema,
  DRIFT_COVERAGE_WARNING,
  DRIFT_MINIMUM_OUTCOMES,
  planningQuantileSchema,
} from "~/schemas/forecast";
import { formToObject, parseWith } from "~/schemas/form";
import type { Route } from "./+types/models._index";

export const meta: Route.MetaFunction = () => [{ title: "Forecast models · Limberly" }];

// Assessors: model versions per device type with who fitted/approved them and their drift, the
// proficiency criteria, and the planning quantile.
export async function loader({ request }: Route.LoaderArgs) {
  const p = await requireUser(request, "models.manage");
  const [versions, criteria, quantile] = await Promise.all([listModelVersions(), listCriteria(), planningQuantile()]);
  return { versions, criteria, quantile, me: p.user.id };
}

export async function action({ request }: Route.ActionArgs) {
  const p = await requireUser(request, "models.manage");
  const form = formToObject(await request.formData());
  if (form.intent === "criterion") {
    const parsed = parseWith(criterionFormSchema, form);
    if (!parsed.ok)
      return data(
        { intent: "criterion", deviceTypeId: Number(form.deviceTypeId), errors: parsed.errors, done: null },
        { status: 400 },
      );
    try {
      await setCriterion(parsed.data, p.user.id);
    } catch (e) {
      if (e instanceof UnknownDeviceTypeError)
        return data(
          { intent: "criterion", deviceTypeId: parsed.data.deviceTypeId, errors: { _form: e.message }, done: null },
          { status: 404 },
        );
      throw e;
    }
    return { intent: "criterion", deviceTypeId: parsed.data.deviceTypeId, errors: null, done: "Criterion saved." };
  }
  if (form.intent === "quantile") {
    const parsed = parseWith(planningQuantileSchema, form);
    if (!parsed.ok)
      return data({ intent: "quantile", deviceTypeId: null, errors: parsed.errors, done: null }, { status: 400 });
    const n = await setPlanningQuantile(parsed.data.planningQuantile);
    return {
      intent: "quantile",
      deviceTypeId: null,
      errors: null,
      done: `Planning quantile set to ${parsed.data.planningQuantile.toFixed(2)}; ${n} forecasts recomputed.`,
    };
  }
  return data({ intent: null, deviceTypeId: null, errors: { _form: "Unknown request." }, done: null }, { status: 400 });
}

const pct = (v: number | null) => (v == null ? "—" : `${Math.round(v * 100)} %`);
const statusClass: Record<string, string> = {
  approved: "bg-spruce-100 text-spruce-800",
  draft: "bg-amber-wash text-amber-caution",
  retired: "bg-paper text-ink-soft",
};

export default function ModelsIndex({ loaderData }: Route.ComponentProps) {
  const { versions, criteria, quantile } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const errors = (result?.errors ?? {}) as Record<string, string>;
  const warnings = versions.filter((v) => v.drift.warn);
  return (
    <div className="grid gap-6">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <div>
          <h1 className="page-title">Forecast models</h1>
          <p className="text-ink-soft">
            Versions of the hours-to-proficiency model per device type. A version is used for forecasts and plans only
            after a second assessor approves it.
          </p>
        </div>
        <Link to="/models/new" className="btn-primary">
          Fit a new model
        </Link>
      </div>

      {warnings.map((v) => (
        <p key={v.id} role="alert" className="rounded-md bg-alert-wash p-3 text-alert" data-testid="drift-warning">
          Drift: {v.deviceTypeName} version {v.versionNumber} — only {pct(v.drift.coverage80)} of {v.drift.n} workers
          who reached proficiency were inside their 80 % interval (warning below {pct(DRIFT_COVERAGE_WARNING)}).
          Consider refitting.
        </p>
      ))}

      <section className="card overflow-x-auto p-0" aria-labelledby="versions-h">
        <h2 id="versions-h" className="px-4 pt-4 text-lg font-semibold">
          Version history
        </h2>
        <table className="table-base mt-2">
          <caption className="sr-only">Model versions</caption>
          <thead>
            <tr>
              <th scope="col">Device type</th>
              <th scope="col">Version</th>
              <th scope="col">Status</th>
              <th scope="col">Cohort</th>
              <th scope="col">LOOCV MAE</th>
              <th scope="col">R²</th>
              <th scope="col">80 % coverage (LOOCV)</th>
              <th scope="col">Fitted</th>
              <th scope="col">Approved</th>
              <th scope="col">Drift since approval</th>
            </tr>
          </thead>
          <tbody>
            {versions.length === 0 && (
              <tr>
                <td colSpan={10}>No model versions yet. Fit one to start forecasting.</td>
              </tr>
            )}
            {versions.map((v) => (
              <tr key={v.id}>
                <td>{v.deviceTypeName}</td>
                <td>
                  <Link className="font-medium text-spruce-700 underline" to={`/models/${v.id}`}>
                    v{v.versionNumber}
                  </Link>
                </td>
                <td>
                  <span className={`rounded px-2 py-0.5 text-xs font-semibold ${statusClass[v.status]}`}>
                    {v.status}
                  </span>
                </td>
                <td>{v.cohortSize}</td>
                <td>{v.loocvMaeHours.toFixed(1)} h</td>
                <td>{v.rSquared.toFixed(2)}</td>
                <td>{pct(v.loocvCoverage80)}</td>
                <td>
                  {v.fittedBy ?? "—"}
                  <br />
                  <span className="text-xs text-ink-soft">{v.fittedAt.slice(0, 16).replace("T", " ")}</span>
                </td>
                <td>
                  {v.approvedBy ?? "—"}
                  {v.approvedAt && (
                    <>
                      <br />
                      <span className="text-xs text-ink-soft">{v.approvedAt.slice(0, 16).replace("T", " ")}</span>
                    </>
                  )}
                </td>
                <td>
                  {v.drift.n === 0
                    ? "no outcomes yet"
                    : `${v.drift.n} outcomes · MAE ${v.drift.maeHours!.toFixed(1)} h · coverage ${pct(v.drift.coverage80)}`}
                  {v.drift.n > 0 && v.drift.n < DRIFT_MINIMUM_OUTCOMES && (
                    <span className="block text-xs text-ink-soft">
                      too few to judge (needs {DRIFT_MINIMUM_OUTCOMES})
                    </span>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      <section className="card" aria-labelledby="criteria-h">
        <h2 id="criteria-h" className="text-lg font-semibold">
          Proficiency criteria
        </h2>
        <p className="text-sm text-ink-soft">
          A worker is proficient at the first session that completes a run of consecutive sessions with a task score at
          or above the threshold. The course is then marked proficient with its date and cumulative hours.
        </p>
        <div className="mt-3 grid gap-4 md:grid-cols-2">
          {criteria.map((c) => {
            const mine = result?.intent === "criterion" && result.deviceTypeId === c.deviceTypeId;
            const e = mine ? errors : {};
            const idp = `crit-${c.deviceTypeId}`;
            return (
              <Form
                key={c.deviceTypeId}
                method="post"
                className="grid gap-2 rounded-md border border-line p-3"
                noValidate
                aria-labelledby={`${idp}-h`}
              >
                <h3 id={`${idp}-h`} className="font-semibold">
                  {c.deviceTypeName}
                </h3>
                <p className="text-xs text-ink-soft">
                  {c.setAt
                    ? `Set by ${c.setBy ?? "unknown"} on ${c.setAt.slice(0, 10)}`
                    : "No criterion yet: nobody can be marked proficient on this device."}
                </p>
                {mine && <FormError message={e._form} />}
                {mine && result?.done && <Notice>{result.done}</Notice>}
                <input type="hidden" name="intent" value="criterion" />
                <input type="hidden" name="deviceTypeId" value={c.deviceTypeId} />
                <div className="grid grid-cols-2 gap-2">
                  <div>
                    <label className="field-label" htmlFor={`${idp}-t`}>
                      Score threshold (0–1)
                    </label>
                    <input
                      id={`${idp}-t`}
                      name="scoreThreshold"
                      className="field-input"
                      inputMode="decimal"
                      defaultValue={c.scoreThreshold ?? ""}
                      aria-invalid={e.scoreThreshold ? true : undefined}
                      aria-describedby={e.scoreThreshold ? `${idp}-te` : undefined}
                    />
                    {e.scoreThreshold && (
                      <p id={`${idp}-te`} className="field-error">
                        {e.scoreThreshold}
                      </p>
                    )}
                  </div>
                  <div>
                    <label className="field-label" htmlFor={`${idp}-n`}>
                      Consecutive sessions
                    </label>
                    <input
                      id={`${idp}-n`}
                      name="consecutiveSessions"
                      className="field-input"
                      inputMode="numeric"
                      defaultValue={c.consecutiveSessions ?? 2}
                      aria-invalid={e.consecutiveSessions ? true : undefined}
                      aria-describedby={e.consecutiveSessions ? `${idp}-ne` : undefined}
                    />
                    {e.consecutiveSessions && (
                      <p id={`${idp}-ne`} className="field-error">
                        {e.consecutiveSessions}
                      </p>
                    )}
                  </div>
                </div>
                <div>
                  <button type="submit" className="btn-quiet" disabled={busy}>
                    Save criterion
                  </button>
                </div>
              </Form>
            );
          })}
        </div>
      </section>

      <section className="card" aria-labelledby="quantile-h">
        <h2 id="quantile-h" className="text-lg font-semibold">
          Planning figure
        </h2>
        <p className="text-sm text-ink-soft">
          Plans use this quantile of each worker's forecast so that they run short only rarely (0.80: one time in five).
          Changing it recomputes every forecast.
        </p>
        {result?.intent === "quantile" && result.done && (
          <div className="mt-2">
            <Notice>{result.done}</Notice>
          </div>
        )}
        <Form method="post" className="mt-3 flex flex-wrap items-end gap-3" noValidate>
          <input type="hidden" name="intent" value="quantile" />
          <div>
            <label className="field-label" htmlFor="planningQuantile">
              Planning quantile (0.50–0.95)
            </label>
            <input
              id="planningQuantile"
              name="planningQuantile"
              className="field-input"
              inputMode="decimal"
              defaultValue={quantile.toFixed(2)}
              aria-invalid={result?.intent === "quantile" && errors.planningQuantile ? true : undefined}
              aria-describedby={result?.intent === "quantile" && errors.planningQuantile ? "pq-error" : undefined}
            />
            {result?.intent === "quantile" && errors.planningQuantile && (
              <p id="pq-error" className="field-error">
                {errors.planningQuantile}
              </p>
            )}
          </div>
          <button type="submit" className="btn-quiet" disabled={busy}>
            Save and recompute
          </button>
        </Form>
      </section>
    </div>
  );
}

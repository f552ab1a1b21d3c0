import { Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";

import { driftSentence } from "~/components/drift-summary";
import { ActionForm, Notice, TextField } from "~/components/fields";
import { formAction } from "~/forms.server";
import { planningQuantile, setPlanningQuantile } from "~/models/forecast.server";
import { listModelVersions } from "~/models/model-versions.server";
import { listCriteria, setCriterion } from "~/models/proficiency.server";
import { modelsFormSchema, percentileLabel } from "~/schemas/forecast";
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
  return formAction(await request.formData(), modelsFormSchema, async (v) => {
    if (v.intent === "criterion") {
      await setCriterion(v, p.user.id);
      return "Criterion saved.";
    }
    const n = await setPlanningQuantile(v.planningQuantile);
    return `Planning figure set to the ${percentileLabel(v.planningQuantile)}; ${n} forecasts recomputed.`;
  });
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
  const warnings = versions.filter((v) => v.drift.alarm);
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
          Drift: {v.deviceTypeName} version {v.versionNumber} — {v.drift.missed} of {v.drift.within + v.drift.missed}{" "}
          courses went past their planning figure, too many for the {percentileLabel(v.drift.target)} (one-sided exact
          binomial test, false-alarm rate {pct(v.drift.alpha)}). Consider refitting.
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
              <th scope="col">Typical miss</th>
              <th scope="col">Within planning figure (one left out at a time)</th>
              <th scope="col">Fitted</th>
              <th scope="col">Approved</th>
              <th scope="col">Drift since approval</th>
            </tr>
          </thead>
          <tbody>
            {versions.length === 0 && (
              <tr>
                <td colSpan={9}>No model versions yet. Fit one to start forecasting.</td>
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
                <td>
                  {v.cohortSize}
                  {v.stillTraining != null && (
                    <span className="block text-xs text-ink-soft">
                      {v.stillTraining + (v.stopped ?? 0)} still in training or stopped
                    </span>
                  )}
                </td>
                <td>{v.loocvMaeHours.toFixed(1)} h</td>
                <td>
                  {v.loocvPlanningCoverage == null ? "not checked (older version)" : pct(v.loocvPlanningCoverage)}
                </td>
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
                <td>{v.status === "draft" ? "—" : driftSentence(v.drift)}</td>
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
            const which = { deviceTypeId: String(c.deviceTypeId) };
            const mine =
              result?.intent === "criterion" && result.result.initialValue?.deviceTypeId === which.deviceTypeId;
            const idp = `crit-${c.deviceTypeId}`;
            return (
              <ActionForm
                key={c.deviceTypeId}
                intent="criterion"
                match={which}
                result={result}
                className="grid gap-2 rounded-md border border-line p-3"
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
                {mine && result?.notice && <Notice>{result.notice}</Notice>}
                <input type="hidden" name="deviceTypeId" value={c.deviceTypeId} />
                <div className="grid grid-cols-2 gap-2">
                  <TextField
                    name="scoreThreshold"
                    label="Score threshold (0–1)"
                    inputMode="decimal"
                    defaultValue={c.scoreThreshold == null ? "" : String(c.scoreThreshold)}
                  />
                  <TextField
                    name="consecutiveSessions"
                    label="Consecutive sessions"
                    inputMode="numeric"
                    defaultValue={String(c.consecutiveSessions ?? 2)}
                  />
                </div>
                <div>
                  <button type="submit" className="btn-quiet" disabled={busy}>
                    Save criterion
                  </button>
                </div>
              </ActionForm>
            );
          })}
        </div>
      </section>

      <section className="card" aria-labelledby="quantile-h">
        <h2 id="quantile-h" className="text-lg font-semibold">
          Planning figure
        </h2>
        <p className="text-sm text-ink-soft">
          Plans use this percentile of each worker's forecast so that they run short only rarely (80th percentile: one
          time in five). Changing it recomputes every forecast. Now: the {percentileLabel(quantile)}.
        </p>
        {result?.intent === "quantile" && result.notice && (
          <div className="mt-2">
            <Notice>{result.notice}</Notice>
          </div>
        )}
        <ActionForm intent="quantile" result={result} className="mt-3 flex flex-wrap items-end gap-3">
          <TextField
            name="planningQuantile"
            label="Planning percentile (50–95)"
            inputMode="numeric"
            defaultValue={String(Math.round(quantile * 100))}
          />
          <button type="submit" className="btn-quiet" disabled={busy}>
            Save and recompute
          </button>
        </ActionForm>
      </section>
    </div>
  );
}

import { invariantResponse } from "@epic-web/invariant";
import { Link } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { ForecastExplanation } from "~/components/forecast-explanation";
import { userErrorResponse } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { workerForecastView } from "~/models/forecast.server";
import { noForecastText } from "~/schemas/forecast";
import type { Route } from "./+types/forecast.$workerId";

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `Forecast · ${d.worker.employeeNumber} · Limberly` : "Forecast · Limberly" },
];

// One worker's forecasts per device type. The payload is shaped in the data layer by the reader's view:
// assessors get the explanation with z-scores; coordinators get hours and intervals only.
export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "forecast.read");
  const workerId = Number(params.workerId);
  invariantResponse(Number.isInteger(workerId), "No such worker.", { status: 404 });
  const view = await workerForecastView(p, workerId).catch((e) => {
    throw userErrorResponse(e);
  });
  await recordAccess(p, request, workerId, "forecast");
  return view;
}

const h = (v: number | null) => (v == null ? "—" : `${v.toFixed(1)} h`);

export default function WorkerForecastPage({ loaderData }: Route.ComponentProps) {
  const { worker, forecasts, planningConsent, howComputed, view } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to="/forecast" className="text-spruce-700 underline">
            Forecasts
          </Link>
        </p>
        <h1 className="page-title">
          {worker.name} <span className="text-ink-soft">· {worker.employeeNumber}</span>
        </h1>
        <p className="text-ink-soft">
          {worker.site} · {worker.department}
        </p>
      </div>
      {!planningConsent && (
        <p role="status" className="rounded-md bg-amber-wash p-3">
          {noForecastText("no_consent")}
        </p>
      )}
      <div className="grid gap-4 lg:grid-cols-2">
        {forecasts.map((f) => (
          <section
            key={f.deviceType.id}
            className="card grid gap-3"
            aria-labelledby={`dev-${f.deviceType.id}`}
            data-testid={`forecast-${f.deviceType.code}`}
          >
            <h2 id={`dev-${f.deviceType.id}`} className="text-lg font-semibold">
              {f.deviceType.name}
            </h2>
            {f.status !== "ready" && (
              <p className="text-sm text-ink-soft" data-testid="no-forecast">
                {noForecastText(f.status, f.missingMeasures)}
              </p>
            )}
            {f.status === "ready" && (
              <>
                <dl className="grid grid-cols-3 gap-2">
                  <div>
                    <dt className="text-xs text-ink-soft">Median</dt>
                    <dd className="text-xl font-semibold" data-testid="median">
                      {h(f.medianHours)}
                    </dd>
                  </div>
                  <div>
                    <dt className="text-xs text-ink-soft">{Math.round(f.intervalLevel * 100)} % interval</dt>
                    <dd className="text-xl font-semibold" data-testid="interval">
                      {f.lowerHours!.toFixed(1)}–{f.upperHours!.toFixed(1)} h
                    </dd>
                  </div>
                  <div>
                    <dt className="text-xs text-ink-soft">
                      Planning figure ({Math.round(f.planningQuantile * 100)}th pct.)
                    </dt>
                    <dd className="text-xl font-semibold" data-testid="planning">
                      {h(f.planningHours)}
                    </dd>
                  </div>
                </dl>
                {f.progress && f.progress.status !== "proficient" && (
                  <div className="rounded-md bg-spruce-50 p-3 text-sm" data-testid="progress-summary">
                    {f.progress.status === "review" ? (
                      <p className="text-alert">
                        <strong>Flagged for review:</strong> {f.progress.reason}
                      </p>
                    ) : (
                      <p>
                        After {f.progress.hoursDone.toFixed(1)} h of training: about{" "}
                        <strong>{h(f.progress.remainingHours)}</strong> to go (80 %:{" "}
                        {f.progress.remainingLower!.toFixed(1)}–{f.progress.remainingUpper!.toFixed(1)} h; planning{" "}
                        {h(f.progress.remainingPlanningHours)})
                        {f.progress.status === "combined"
                          ? `, ${Math.round((f.progress.curveWeight ?? 0) * 100)} % from the progress curve`
                          : ", from the baseline forecast alone"}
                        .
                      </p>
                    )}
                    <p className="mt-1">
                      <Link className="text-spruce-700 underline" to={`/progress/${worker.id}/${f.deviceType.id}`}>
                        Progress chart
                      </Link>
                    </p>
                  </div>
                )}
                {f.course?.status === "proficient" && (
                  <p className="text-sm">
                    Proficient on {f.course.proficientOn} after {f.course.hoursToProficiency?.toFixed(1)} h.
                  </p>
                )}
                {f.reviewFlags.length > 0 && f.progress?.status !== "review" && (
                  <ul className="text-sm text-alert">
                    {f.reviewFlags.map((r) => (
                      <li key={r.kind}>Review: {r.reason}</li>
                    ))}
                  </ul>
                )}
                {f.explanation ? (
                  <ForecastExplanation
                    baselineHours={f.explanation.baselineHours}
                    medianHours={f.medianHours!}
                    contributions={f.explanation.contributions}
                  />
                ) : (
                  view === "planning" && (
                    <p className="text-xs text-ink-soft">
                      How each baseline measure moved this forecast is visible to assessors only.
                    </p>
                  )
                )}
                {f.modelVersion && (
                  <p className="text-xs text-ink-soft">
                    Model v{f.modelVersion.versionNumber} (approved {f.modelVersion.approvedAt?.slice(0, 10) ?? "—"}),
                    cohort of {f.modelVersion.cohortSize}; cross-validated error{" "}
                    {f.modelVersion.loocvMaeHours.toFixed(1)} h, 80 % intervals held the actual hours for{" "}
                    {Math.round(f.modelVersion.loocvCoverage80 * 100)} % of past trainees. Computed{" "}
                    {f.computedAt?.slice(0, 16).replace("T", " ")}.
                  </p>
                )}
                {f.course && f.course.status !== "proficient" && !f.progress && (
                  <p className="text-sm">
                    <Link className="text-spruce-700 underline" to={`/progress/${worker.id}/${f.deviceType.id}`}>
                      Progress
                    </Link>
                  </p>
                )}
              </>
            )}
          </section>
        ))}
      </div>
      <details className="card">
        <summary className="cursor-pointer font-semibold">How these numbers are computed</summary>
        <p className="mt-2 text-sm">{howComputed}</p>
      </details>
      <DeviceCautions compact />
    </div>
  );
}

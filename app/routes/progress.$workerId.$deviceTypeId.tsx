import { data, Link, useActionData } from "react-router";
import { type Principal, requireUser } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice } from "~/components/fields";
import { NoShows } from "~/components/no-shows";
import { ProgressChart } from "~/components/progress-chart";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { resolveFlags } from "~/models/forecast.server";
import {
  nextSessionWithTrainee,
  progressView,
  reachesOnlyOwnTrainees,
  trainerHasTrainee,
  trainerIdFor,
} from "~/models/progress.server";
import { reviewPath } from "~/schemas/course-review";
import { resolveFlagsSchema } from "~/schemas/forecast";
import type { Route } from "./+types/progress.$workerId.$deviceTypeId";

export const meta: Route.MetaFunction = ({ data: d }) => [
  {
    title: d
      ? `Progress · ${d.view.worker.employeeNumber} · ${d.view.deviceType.name} · Limberly`
      : "Progress · Limberly",
  },
];

/** Trainers reach only trainees on their own schedule; everyone else is held to their scope by progressView. */
async function assertTrainerReach(p: Principal & { kind: "user" }, workerId: number, deviceTypeId: number) {
  if (!reachesOnlyOwnTrainees(p)) return null;
  const trainerId = await trainerIdFor(p.user.id);
  if (!trainerId || !(await trainerHasTrainee(trainerId, workerId, deviceTypeId)))
    throw data({ error: "This worker is not on your schedule for this device." }, { status: 404 });
  return trainerId;
}

function ids(params: { workerId?: string; deviceTypeId?: string }) {
  const workerId = Number(params.workerId);
  const deviceTypeId = Number(params.deviceTypeId);
  if (!Number.isInteger(workerId) || !Number.isInteger(deviceTypeId))
    throw data({ error: "Not found." }, { status: 404 });
  return { workerId, deviceTypeId };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "progress.read");
  const { workerId, deviceTypeId } = ids(params);
  await assertTrainerReach(p, workerId, deviceTypeId);
  const view = await progressView(p, workerId, deviceTypeId);
  if (!view) throw data({ error: "No such worker or device type in your scope." }, { status: 404 });
  await recordAccess(p, request, workerId, "progress");
  const trainerId = can(p.user, "sessions.log") ? await trainerIdFor(p.user.id) : null;
  return {
    view,
    /** Sessions are logged on the session page only (with adverse events): the viewer's next one with this trainee. */
    logSessionId: trainerId ? await nextSessionWithTrainee(trainerId, workerId, deviceTypeId) : null,
    canResolve: can(p.user, "models.manage"),
    canReview: can(p, "courses.review"),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await request.formData();
  const { workerId, deviceTypeId } = ids(params);
  const p = await requireUser(request, "models.manage");
  if (!(await progressView(p, workerId, deviceTypeId))) throw data({ error: "Not found." }, { status: 404 });
  return formAction(formData, resolveFlagsSchema, async () => {
    const n = await resolveFlags(workerId, deviceTypeId, p.user.id);
    return `${n} review flag${n === 1 ? "" : "s"} marked as reviewed.`;
  });
}

const h = (v: number | null | undefined) => (v == null ? "—" : `${v.toFixed(1)} h`);

export default function ProgressPage({ loaderData }: Route.ComponentProps) {
  const { view: v, logSessionId, canResolve, canReview } = loaderData;
  const result = useActionData<typeof action>();
  const f = v.forecast;
  const proficient = v.course?.status === "proficient";
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to="/progress" className="text-spruce-700 underline">
            Training progress
          </Link>
        </p>
        <h1 className="page-title">
          {v.worker.name} <span className="text-ink-soft">· {v.deviceType.name}</span>
        </h1>
        <p className="text-ink-soft">
          {v.worker.employeeNumber} ·{" "}
          {v.course
            ? `${v.course.status}, ${v.course.cumulativeHours.toFixed(1)} h logged${v.course.startedOn ? ` since ${v.course.startedOn}` : ""}`
            : "no sessions yet"}
          {v.criterion &&
            ` · criterion: ${v.criterion.consecutiveSessions} consecutive sessions at ≥ ${v.criterion.scoreThreshold}`}
        </p>
      </div>
      <ActionNotice result={result} />
      {(v.course?.status === "paused" || v.review) && (
        <div
          role={v.course?.status === "paused" ? "alert" : undefined}
          className={`rounded-md p-3 ${v.course?.status === "paused" ? "bg-alert-wash text-alert" : "bg-spruce-50 text-spruce-800"}`}
          data-testid="course-review-status"
        >
          <p>
            {v.course?.status === "paused"
              ? "Paused after a severe adverse event: an assessor reviews the course before training resumes."
              : `${v.review!.label} after a pause${v.review!.wearTimeLimitMinutes != null ? `: at most ${v.review!.wearTimeLimitMinutes} minutes per session` : ""}${v.review!.conditions ? `; ${v.review!.conditions}` : ""}.`}
          </p>
          {canReview && (
            <Link to={reviewPath(v.worker.id, v.deviceType.id)} className="text-sm underline">
              {v.course?.status === "paused" ? "Review and decide" : "Course review"}
            </Link>
          )}
        </div>
      )}
      {v.reviewFlags.length > 0 && (
        <div role="alert" className="rounded-md bg-alert-wash p-3 text-alert" data-testid="review-flag">
          <p className="font-semibold">Flagged for review</p>
          <ul className="list-disc pl-5">
            {v.reviewFlags.map((r) => (
              <li key={r.kind}>{r.reason}</li>
            ))}
          </ul>
          <p className="mt-1 text-sm">
            No remaining-hours figure is extrapolated past a plateau. Review technique, fit and settings with the
            trainer.
          </p>
          {canResolve && (
            <ActionForm intent="resolve" result={result} className="mt-2">
              <button type="submit" className="btn-quiet">
                Mark as reviewed
              </button>
            </ActionForm>
          )}
        </div>
      )}
      <section className="card grid gap-3 sm:grid-cols-3" aria-label="Remaining hours" data-testid="remaining">
        {proficient ? (
          <p className="sm:col-span-3">
            <strong>Proficient</strong> on {v.course!.proficientOn} after {h(v.course!.hoursToProficiency)}
            {f
              ? ` (baseline forecast: median ${h(f.medianHours)}, 80 % ${f.lowerHours.toFixed(1)}–${f.upperHours.toFixed(1)} h)`
              : ""}
            .
          </p>
        ) : f ? (
          <>
            <div>
              <p className="text-sm text-ink-soft">Remaining (median)</p>
              <p className="text-2xl font-semibold" data-testid="remaining-median">
                {f.status === "review" ? "under review" : h(f.remainingHours ?? f.medianHours)}
              </p>
            </div>
            <div>
              <p className="text-sm text-ink-soft">80 % interval</p>
              <p className="text-2xl font-semibold">
                {f.remainingLower != null
                  ? `${f.remainingLower.toFixed(1)}–${f.remainingUpper!.toFixed(1)} h`
                  : f.status
                    ? "—"
                    : `${f.lowerHours.toFixed(1)}–${f.upperHours.toFixed(1)} h`}
              </p>
            </div>
            <div>
              <p className="text-sm text-ink-soft">Planning figure ({Math.round(f.planningQuantile * 100)}th pct.)</p>
              <p className="text-2xl font-semibold">
                {h(f.remainingPlanningHours ?? (f.status ? null : f.planningHours))}
              </p>
            </div>
            <p className="text-sm text-ink-soft sm:col-span-3">
              {f.status === "combined" &&
                `The progress curve carries ${Math.round((f.curveWeight ?? 0) * 100)} % of the weight and the baseline forecast (model v${f.modelVersion}, median ${h(f.medianHours)} in total) the rest, by their uncertainties.`}
              {f.status === "prior-only" &&
                `From the baseline forecast alone (model v${f.modelVersion}), given the hours already done: ${f.reason ?? "the curve is not yet informative"}.`}
              {!f.status && `Baseline forecast (model v${f.modelVersion}); no sessions logged yet.`}
            </p>
          </>
        ) : (
          <p className="sm:col-span-3 text-sm" data-testid="no-forecast">
            {v.noForecast}
          </p>
        )}
      </section>
      <section className="card" aria-labelledby="chart-h">
        <h2 id="chart-h" className="text-lg font-semibold">
          Progress curve
        </h2>
        <ProgressChart
          sessions={v.sessions}
          curve={v.curvePoints}
          threshold={v.criterion?.scoreThreshold ?? null}
          crossing={proficient ? null : (f?.crossing ?? null)}
        />
        {f?.curve && <CurveMethod forecast={f} criterion={v.criterion} />}
      </section>
      <section className="card grid gap-2" aria-label="Logging sessions" data-testid="log-here">
        <NoShows noShows={v.noShows} reader="staff" />
        <p className="text-sm">
          {logSessionId ? (
            <Link to={`/train/sessions/${logSessionId}`} className="font-semibold text-spruce-700 underline">
              Log the next session with {v.worker.name}
            </Link>
          ) : (
            "Sessions are logged by their trainer on the session log (My training days), with any adverse events."
          )}
        </p>
      </section>
      <section className="card overflow-x-auto p-0" aria-labelledby="sessions-h">
        <h2 id="sessions-h" className="px-4 pt-4 text-lg font-semibold">
          Sessions
        </h2>
        <table className="table-base mt-2" data-testid="sessions">
          <caption className="sr-only">Logged sessions</caption>
          <thead>
            <tr>
              <th scope="col">#</th>
              <th scope="col">Date</th>
              <th scope="col">Hours</th>
              <th scope="col">Cumulative</th>
              <th scope="col">Task score</th>
              {v.showNotes && <th scope="col">Notes</th>}
            </tr>
          </thead>
          <tbody>
            {v.sessions.length === 0 && (
              <tr>
                <td colSpan={6}>No sessions logged yet.</td>
              </tr>
            )}
            {v.sessions.map((s, i) => (
              <tr key={s.id}>
                <td>{i + 1}</td>
                <td>{s.at.slice(0, 10)}</td>
                <td>{s.durationHours.toFixed(2)}</td>
                <td>{s.cumulativeHours.toFixed(2)}</td>
                <td>{s.score.toFixed(3)}</td>
                {v.showNotes && <td>{s.notes ?? ""}</td>}
              </tr>
            ))}
          </tbody>
        </table>
      </section>
      <DeviceCautions compact />
    </div>
  );
}

const CURVE_NAMES = { exponential: "exponential", power: "power law" } as const;

/** The "how this was computed" panel of the progress curve: which curve, why, and how remaining hours were found. */
function CurveMethod({
  forecast: f,
  criterion,
}: {
  forecast: NonNullable<Route.ComponentProps["loaderData"]["view"]["forecast"]>;
  criterion: { scoreThreshold: number; consecutiveSessions: number } | null;
}) {
  const curve = f.curve;
  if (!curve) return null;
  const choice = f.curveChoice;
  const sim = f.simulation;
  return (
    <details className="mt-3 text-sm" data-testid="curve-method">
      <summary className="cursor-pointer font-semibold">How this was computed</summary>
      <div className="mt-2 grid gap-2">
        <p data-testid="curve-chosen">
          Curve used: <strong>{CURVE_NAMES[curve.kind]}</strong>
          {choice ? ` (${choice.basis})` : ""}.{" "}
          {curve.kind === "power"
            ? "Score = asymptote − (asymptote − start) · (1 + hours)^(−rate)."
            : "Score = asymptote − (asymptote − start) · e^(−rate · hours)."}{" "}
          Fitted by least squares (Levenberg–Marquardt); asymptote {curve.asymptote.toFixed(3)}, start{" "}
          {curve.start.toFixed(3)}, rate {curve.rate.toPrecision(3)}.
        </p>
        {choice?.candidates.some((c) => c.aicc !== null) && (
          <ul className="list-disc pl-5">
            {choice.candidates.map((c) => (
              <li key={c.kind}>
                {CURVE_NAMES[c.kind]}:{" "}
                {c.aicc === null
                  ? c.converged
                    ? "no AICc"
                    : "did not converge"
                  : `AICc ${c.aicc.toFixed(1)}, Akaike weight ${(c.weight ?? 0).toFixed(2)}`}
              </li>
            ))}
          </ul>
        )}
        <p>
          Exponential and power-law learning curves are both fitted (Heathcote, Brown &amp; Mewhort 2000, Psychonomic
          Bulletin &amp; Review 7:185–207) and the one with the lower AICc is used (Burnham &amp; Anderson 2002,{" "}
          <em>Model Selection and Multimodel Inference</em>, ch. 2: AICc = n·ln(RSS/n) + 2K + 2K(K + 1)/(n − K − 1), K =
          curve parameters + 1).
        </p>
        {sim ? (
          <p data-testid="curve-simulation">
            Remaining hours: {sim.draws.toLocaleString("en")} simulated courses (seed {sim.seed}) continue this log in
            sessions of {sim.sessionHours.toFixed(2)} h until{" "}
            {criterion
              ? `${criterion.consecutiveSessions} session${criterion.consecutiveSessions === 1 ? "" : "s"} in a row score at least ${criterion.scoreThreshold}`
              : "the proficiency rule is met"}
            , with the session-to-session scatter of the scores around the curve and the uncertainty of the curve itself
            drawn anew for each course; {Math.round(sim.reachedShare * 100)} % met the rule within {sim.maxSessions}{" "}
            sessions. This is combined with the baseline forecast by inverse-variance weighting on the log scale (Gelman
            et al., <em>Bayesian Data Analysis</em>, 3rd ed., §2.5).
          </p>
        ) : (
          <p>The curve does not yet inform the remaining hours; the figures come from the baseline forecast alone.</p>
        )}
      </div>
    </details>
  );
}

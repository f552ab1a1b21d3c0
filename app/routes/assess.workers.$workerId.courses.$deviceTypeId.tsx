import { data, Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { StageBadge } from "~/components/badges";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice, RadioGroup, TextArea, TextField } from "~/components/fields";
import { formatInstant } from "~/dates";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { acknowledgeFindings, courseReview, decideCourse } from "~/models/course-reviews.server";
import { workerTimeZone } from "~/models/sites.server";
import { COURSE_DECISION_LABELS, COURSE_DECISIONS, courseReviewPageSchema } from "~/schemas/course-review";
import type { Route } from "./+types/assess.workers.$workerId.courses.$deviceTypeId";

// The assessor's review of one worker's course on one device type (linked from the pause e-mail and the
// worker record): the adverse events, the session log and the safety findings, and the decision form while
// the course is paused.

export const meta: Route.MetaFunction = ({ data: d }) => [
  {
    title: d
      ? `Course review · ${d.review.worker.employeeNumber} · ${d.review.deviceType.name} · Limberly`
      : "Course review · Limberly",
  },
];

function ids(params: { workerId?: string; deviceTypeId?: string }) {
  const workerId = Number(params.workerId);
  const deviceTypeId = Number(params.deviceTypeId);
  if (!Number.isInteger(workerId) || workerId <= 0 || !Number.isInteger(deviceTypeId) || deviceTypeId <= 0)
    throw data({ error: "No such course." }, { status: 404 });
  return { workerId, deviceTypeId };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const p = await requireUser(request, "courses.review");
  const { workerId, deviceTypeId } = ids(params);
  const review = await courseReview(p.scope, workerId, deviceTypeId);
  if (!review) throw data({ error: "No such course for a worker at your sites." }, { status: 404 });
  await recordAccess(p, request, workerId, "sessions");
  return { review, timeZone: await workerTimeZone(workerId) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const p = await requireUser(request, "courses.review");
  const { workerId, deviceTypeId } = ids(params);
  return formAction(await request.formData(), courseReviewPageSchema, async (v) => {
    if (v.intent === "acknowledge") {
      const n = await acknowledgeFindings(p, workerId, deviceTypeId, v.clinicalNote);
      return `Recorded: ${n} safety finding${n === 1 ? "" : "s"} reviewed; the course is unchanged.`;
    }
    const r = await decideCourse(p, workerId, deviceTypeId, v);
    const who = [
      ...(r.notified.worker.length ? ["the worker"] : []),
      ...(r.notified.coordinators.length
        ? [`${r.notified.coordinators.length} coordinator${r.notified.coordinators.length === 1 ? "" : "s"}`]
        : []),
    ];
    return [
      `Decision recorded: ${COURSE_DECISION_LABELS[r.decision].toLowerCase()}${r.wearTimeLimitMinutes != null ? `, wear-time limit ${r.wearTimeLimitMinutes} minutes per session for this worker` : ""}.`,
      r.cancelledSessions
        ? `${r.cancelledSessions} session${r.cancelledSessions === 1 ? "" : "s"} still scheduled from the earlier plan cancelled.`
        : "",
      r.decision === "stop" ? "" : "The worker is in the next allocation run's pool.",
      who.length ? `E-mailed: ${who.join(" and ")}.` : "No one could be e-mailed (no address on file).",
    ]
      .filter(Boolean)
      .join(" ");
  });
}

const minutesText = (m: number | null) => (m == null ? "—" : `${m} min`);

export default function CourseReview({ loaderData }: Route.ComponentProps) {
  const { review: r, timeZone } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const paused = r.course.status === "paused";
  const eventsOf = (sessionId: number) => r.events.filter((e) => e.sessionId === sessionId);
  const findingOf = (sessionId: number) => r.findings.filter((f) => f.sessionId === sessionId);
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to={`/assess/workers/${r.worker.id}`} className="text-spruce-700 underline">
            {r.worker.name}'s record
          </Link>
        </p>
        <h1 className="page-title">
          Course review <span className="text-ink-soft">· {r.deviceType.name}</span>
        </h1>
        <p className="text-ink-soft">
          {r.worker.name} · {r.worker.employeeNumber} · {r.worker.site} · <StageBadge stage={r.worker.stage} /> ·{" "}
          {r.course.cumulativeHours.toFixed(1)} h practised · times in {timeZone}
        </p>
        <p className="mt-1 text-xs text-ink-soft">
          Opening this review is written to the access log; the worker can see who read it.
        </p>
      </div>
      <ActionNotice result={result} />
      <section
        className={`rounded-md p-3 ${paused ? "bg-alert-wash text-alert" : "bg-spruce-50 text-spruce-800"}`}
        data-testid="course-status"
      >
        <p className="font-semibold">
          {paused
            ? "Paused: waiting for your decision"
            : r.decisions[0] && r.decisions[0].decision !== "acknowledge"
              ? `${COURSE_DECISION_LABELS[r.decisions[0].decision]} (${formatInstant(r.decisions[0].decidedAt, timeZone)}, ${r.decisions[0].decidedBy ?? "former user"})`
              : `Course status: ${r.course.status}`}
        </p>
        {r.course.pauseReason && <p>{r.course.pauseReason}</p>}
        <p className="text-sm">
          Wear-time limit for this worker: {r.course.effectiveWearTimeLimitMinutes} minutes per session
          {r.course.wearTimeLimitMinutes != null
            ? ` (set on review; the device type allows ${r.deviceType.wearTimeLimitMinutes})`
            : " (the device type's limit)"}
          .
        </p>
      </section>

      <section className="card grid gap-3" aria-labelledby="events-h">
        <h2 id="events-h" className="text-lg font-semibold">
          Adverse events and safety findings
        </h2>
        {r.events.length === 0 && r.findings.length === 0 ? (
          <p className="text-sm text-ink-soft">None recorded on this course.</p>
        ) : (
          <ul className="grid gap-2" data-testid="events">
            {r.events.map((e) => (
              <li key={`e${e.id}`} className={e.severity === "severe" ? "font-semibold text-alert" : undefined}>
                {formatInstant(e.at, timeZone)} · {e.label}: {e.severity}
                {e.notes ? ` (${e.notes})` : ""}
              </li>
            ))}
            {r.findings.map((f) => (
              <li key={`f${f.id}`} data-testid="finding">
                {formatInstant(f.raisedAt, timeZone)} · Wear-time breach: {f.detail}
                {f.closedByReview ? " Reviewed." : " Open."}
              </li>
            ))}
          </ul>
        )}
      </section>

      <section className="card overflow-x-auto p-0" tabIndex={0} aria-label="Session log (scrolls sideways)">
        <table className="table-base" data-testid="session-log">
          <caption className="p-3 text-left text-lg font-semibold text-ink">Session log</caption>
          <thead>
            <tr>
              <th scope="col">When</th>
              <th scope="col">Status</th>
              <th scope="col">Practice</th>
              <th scope="col">Score</th>
              <th scope="col">Total</th>
              <th scope="col">Events and notes</th>
            </tr>
          </thead>
          <tbody>
            {r.sessions.length === 0 && (
              <tr>
                <td colSpan={6}>No session logged yet.</td>
              </tr>
            )}
            {r.sessions.map((s) => (
              <tr key={s.id}>
                <td className="whitespace-nowrap">{s.at ? formatInstant(s.at, timeZone) : "—"}</td>
                <td>{s.status.replace("_", "-")}</td>
                <td className={findingOf(s.id).length ? "font-semibold text-alert" : undefined}>
                  {minutesText(s.minutes)}
                </td>
                <td>{s.taskScore == null ? "—" : s.taskScore.toFixed(2)}</td>
                <td>{s.cumulativeHours == null ? "—" : `${s.cumulativeHours.toFixed(1)} h`}</td>
                <td>
                  {eventsOf(s.id).map((e) => (
                    <span key={e.id} className="block">
                      {e.label}: {e.severity}
                    </span>
                  ))}
                  {s.notes && <span className="block text-ink-soft">{s.notes}</span>}
                  {s.loggedBy && <span className="block text-xs text-ink-soft">logged by {s.loggedBy}</span>}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </section>

      {paused && (
        <ActionForm intent="decide" result={result} className="card grid gap-4" aria-labelledby="decide-h">
          <h2 id="decide-h" className="text-lg font-semibold">
            Decision
          </h2>
          <RadioGroup
            name="decision"
            legend="What happens to this course"
            options={COURSE_DECISIONS.map((d) => ({ value: d, label: COURSE_DECISION_LABELS[d] }))}
          />
          <TextField
            name="wearTimeLimitMinutes"
            label="Wear-time limit for this worker on this device type (minutes per session)"
            inputMode="numeric"
            hint={`For resume with conditions: below the device type's ${r.deviceType.wearTimeLimitMinutes} minutes. Planning and session logs hold to it.`}
          />
          <TextArea name="conditions" label="Other conditions (optional)" rows={2} />
          <TextArea
            name="clinicalNote"
            label="Clinical note"
            required
            rows={4}
            hint="What you reviewed (fit, settings, the worker's condition) and why you decided so. Kept with your name and the time; not sent to the coordinators."
          />
          <p className="text-sm text-ink-soft">
            The worker and the coordinators covering the worker are e-mailed the decision and any wear-time limit.
            Sessions still scheduled on this device are cancelled; a resumed worker is planned afresh by the next
            allocation run.
          </p>
          <div>
            <button type="submit" className="btn-primary min-w-40" disabled={busy}>
              {busy ? "Saving…" : "Record decision"}
            </button>
          </div>
        </ActionForm>
      )}

      {!paused && r.findings.some((f) => !f.closedByReview) && (
        <ActionForm intent="acknowledge" result={result} className="card grid gap-4" aria-labelledby="ack-h">
          <h2 id="ack-h" className="text-lg font-semibold">
            Review the open safety finding
          </h2>
          <p className="text-sm text-ink-soft">
            The course is not paused. Record what you checked; the course and its wear-time limit stay as they are.
          </p>
          <TextArea name="clinicalNote" label="Clinical note" required rows={3} />
          <div>
            <button type="submit" className="btn-primary min-w-40" disabled={busy}>
              {busy ? "Saving…" : "Mark as reviewed"}
            </button>
          </div>
        </ActionForm>
      )}

      {r.decisions.length > 0 && (
        <section className="card grid gap-3" aria-labelledby="decisions-h">
          <h2 id="decisions-h" className="text-lg font-semibold">
            Decisions
          </h2>
          <ul className="grid gap-3" data-testid="decisions">
            {r.decisions.map((d) => (
              <li key={d.id} className="border-b border-line pb-2">
                <p className="font-medium">
                  {COURSE_DECISION_LABELS[d.decision]}
                  {d.wearTimeLimitMinutes != null ? ` · wear-time limit ${d.wearTimeLimitMinutes} min` : ""}
                </p>
                <p className="text-sm text-ink-soft">
                  {formatInstant(d.decidedAt, timeZone)} · {d.decidedBy ?? "former user"}
                </p>
                {d.conditions && <p>Conditions: {d.conditions}</p>}
                <p className="whitespace-pre-line">{d.clinicalNote}</p>
              </li>
            ))}
          </ul>
        </section>
      )}
      <DeviceCautions compact />
    </div>
  );
}

import { data, Link, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice, FieldMessage, RadioGroup, TextArea, TextField } from "~/components/fields";
import {
  addMinutesToWallClock,
  formatDay,
  formatInstant,
  formatInstantDay,
  formatSpan,
  toLocalInput,
  wallClockNow,
} from "~/dates";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import {
  logTrainerSession,
  markNoShow,
  nextSessionToLog,
  sessionMark,
  trainerForUser,
  trainerSession,
  undoLastMark,
} from "~/models/trainer-day.server";
import {
  ADVERSE_KINDS,
  ADVERSE_LABELS,
  NO_SHOW_LABELS,
  NO_SHOW_REASONS,
  noShowSchema,
  noShowText,
  SEVERE_STAYS,
  SEVERITIES,
  scoreRead,
  trainerLogSchema,
  undoMarkSchema,
} from "~/schemas/session-log";
import type { Route } from "./+types/train.sessions.$sessionId";

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `Session · ${d.session.trainee} · Limberly` : "Session · Limberly" },
];

const NOT_YOURS = "This session is not on your schedule.";

/** The signed-in trainer and the session, only if it is on their schedule (403 otherwise, also for unknown ids). */
async function load(request: Request, params: { sessionId?: string }, action: "sessions.own" | "sessions.log") {
  const p = await requireUser(request, action);
  const trainer = await trainerForUser(p.user.id);
  const id = Number(params.sessionId);
  if (!trainer || !Number.isInteger(id) || id <= 0) throw data({ error: NOT_YOURS }, { status: 403 });
  const session = await trainerSession(trainer.id, id);
  if (!session) throw data({ error: NOT_YOURS }, { status: 403 });
  return { p, trainer, session };
}

export async function loader({ request, params }: Route.LoaderArgs) {
  const { p, trainer, session } = await load(request, params, "sessions.own");
  await recordAccess(p, request, session.workerId, "sessions");
  const marked = session.status !== "scheduled";
  return {
    session,
    timeZone: trainer.timeZone,
    now: wallClockNow(trainer.timeZone),
    mark: marked ? await sessionMark(trainer, session.id, p.user.id) : null,
    next: marked ? await nextSessionToLog(trainer, session) : null,
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await request.formData();
  const intent = formData.get("intent");
  // A no-show and an undo need the trainer's own schedule, a log the logging right: the intent picks which.
  if (intent === "no_show") {
    const { p, trainer, session } = await load(request, params, "sessions.own");
    return formAction(formData, noShowSchema, async (v) => {
      await markNoShow(trainer.id, session.id, p.user.id, v);
      return `No-show recorded for ${session.trainee}: ${noShowText(v.reason, v.reasonNote ?? null)}.`;
    });
  }
  if (intent === "undo") {
    const { p, trainer, session } = await load(request, params, "sessions.own");
    return formAction(formData, undoMarkSchema, async () => {
      const r = await undoLastMark({ trainer, sessionId: session.id, principal: p, request });
      const removed = [
        r.eventsRemoved ? `${r.eventsRemoved} adverse event${r.eventsRemoved === 1 ? "" : "s"}` : null,
        r.findingsRemoved ? `the wear-time finding` : null,
      ].filter(Boolean);
      return r.mark === "attended"
        ? `Log undone: the session with ${r.trainee} is to do again; hours, course and forecast are as before it${removed.length ? `, and ${removed.join(" and ")} recorded with it ${removed.length === 1 && r.eventsRemoved === 1 ? "is" : "are"} removed` : ""}. The undo is kept in the access log.`
        : `No-show undone: the session with ${r.trainee} is to do again. The undo is kept in the access log.`;
    });
  }
  const { p, trainer, session } = await load(request, params, "sessions.log");
  return formAction(formData, trainerLogSchema, async (v) => {
    const r = await logTrainerSession({ trainer, sessionId: session.id, userId: p.user.id, form: v });
    const parts = [
      `Session logged with task score ${scoreRead(v.taskScore, formData.get("taskScore"))}: ${r.cumulativeHours.toFixed(1)} h practised so far.`,
    ];
    if (r.wearTimeBreach)
      parts.push(
        `It ran ${r.wearTimeBreach.minutes} minutes, over the wear-time limit of ${r.wearTimeBreach.limitMinutes} minutes: saved as logged, and the breach is recorded as a safety finding for the assessors.`,
      );
    if (r.proficient) parts.push("The proficiency criterion is met.");
    else if (r.remainingHours != null) parts.push(`About ${r.remainingHours.toFixed(1)} h to go.`);
    if (r.eventCount) parts.push(`${r.eventCount} adverse event${r.eventCount === 1 ? "" : "s"} recorded.`);
    if (r.paused)
      parts.push(
        `Training is paused for a severe event; ${r.notified.length ? `the assessors (${r.notified.length}) have been e-mailed` : "no assessor covers this worker's site: tell occupational health directly"}.`,
      );
    return parts.join(" ");
  });
}

export default function TrainerSession({ loaderData }: Route.ComponentProps) {
  const { session: s, timeZone, now, mark, next } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const open = s.status === "scheduled" && s.courseStatus !== "paused";
  const defaultStart = s.start ?? now;
  const defaultEnd = s.end ?? addMinutesToWallClock(defaultStart, 60);
  return (
    <div className="grid gap-6">
      <div>
        <p className="text-sm">
          <Link to="/train" className="text-spruce-700 underline">
            My training days
          </Link>
        </p>
        <h1 className="page-title">
          {s.trainee} <span className="text-ink-soft">· {s.deviceType}</span>
        </h1>
        <p className="text-ink-soft">
          {s.employeeNumber} · {s.start ? `${formatDay(s.start)} ${formatSpan(s.start, s.end)}` : "unscheduled"} ·{" "}
          {s.place}
          {s.unit ? ` · unit ${s.unit}` : ""} · {timeZone} time
        </p>
        <p className="text-sm">
          <Link to={`/progress/${s.workerId}/${s.deviceTypeId}`} className="text-spruce-700 underline">
            Trainee's progress curve
          </Link>
        </p>
      </div>
      <ActionNotice result={result} />
      {s.courseStatus === "paused" && s.status === "scheduled" && (
        <p role="alert" className="rounded-md bg-alert-wash p-3 text-alert">
          Training on this device is paused{s.pauseReason ? `: ${s.pauseReason}` : ""}. Do not train until an assessor
          resumes it.
        </p>
      )}
      {s.courseStatus !== "paused" && s.review && (
        <p className="rounded-md bg-spruce-50 p-3 text-spruce-800" data-testid="review-status">
          {s.review.decision === "stop"
            ? `An assessor stopped training on this device after reviewing the pause (${formatInstantDay(s.review.decidedAt, timeZone)}).`
            : `${s.review.label} after a pause (${formatInstantDay(s.review.decidedAt, timeZone)})${s.review.wearTimeLimitMinutes != null ? `: at most ${s.review.wearTimeLimitMinutes} minutes per session for this trainee` : ""}${s.review.conditions ? `; ${s.review.conditions}` : ""}.`}
        </p>
      )}
      {s.status !== "scheduled" && <Recorded s={s} mark={mark} timeZone={timeZone} result={result} busy={busy} />}
      {s.status !== "scheduled" && (
        <nav aria-label="Next session" className="card" data-testid="next-session">
          {next ? (
            <p>
              Next to log:{" "}
              <Link to={`/train/sessions/${next.id}`} className="font-semibold text-spruce-700 underline">
                {next.trainee} · {next.deviceType} ·{" "}
                {next.start ? `${formatDay(next.start)} ${formatSpan(next.start, next.end)}` : ""}
              </Link>
            </p>
          ) : (
            <p>
              Nothing else to log this week.{" "}
              <Link to="/train" className="text-spruce-700 underline">
                Back to my training days
              </Link>
            </p>
          )}
        </nav>
      )}
      {open && (
        <>
          <DeviceCautions compact reader="trainer" />
          <ActionForm intent="log" result={result} className="grid gap-5">
            <section className="card grid gap-4 sm:grid-cols-2" aria-labelledby="when-h">
              <h2 id="when-h" className="text-lg font-semibold sm:col-span-2">
                Session
              </h2>
              <TextField
                name="start"
                type="datetime-local"
                label="Start"
                required
                defaultValue={toLocalInput(defaultStart)}
              />
              <TextField
                name="end"
                type="datetime-local"
                label="End"
                required
                defaultValue={toLocalInput(defaultEnd)}
                hint={`Practice time within the wear-time limit: ${s.wearTimeLimitMinutes} minutes.`}
              />
              <FieldMessage name="durationHours" className="sm:col-span-2" />
              <TextField
                name="taskScore"
                type="text"
                inputMode="decimal"
                label="Task score (0–1)"
                required
                hint={`Score on the ${s.deviceType}'s standard task, e.g. 0.72 or 0,72.`}
              />
              <div className="sm:col-span-2">
                <TextArea name="notes" label="Notes" rows={3} />
              </div>
            </section>
            <section className="card grid gap-4" aria-labelledby="ae-h">
              <div>
                <h2 id="ae-h" className="text-lg font-semibold">
                  Adverse events
                </h2>
                <p className="text-sm text-ink-soft">
                  Leave "None" unless something happened. A severe event pauses this worker's training and e-mails the
                  assessors.
                </p>
              </div>
              {ADVERSE_KINDS.map((kind) => (
                <RadioGroup
                  key={kind}
                  name={`ae_${kind}`}
                  legend={ADVERSE_LABELS[kind]}
                  options={(["none", ...SEVERITIES] as const).map((sev) => ({
                    value: sev,
                    label: `${sev[0].toUpperCase()}${sev.slice(1)}`,
                  }))}
                  defaultValue="none"
                  className="grid gap-2 border-t border-line pt-3"
                >
                  <TextField
                    name={`ae_${kind}_notes`}
                    label={`${ADVERSE_LABELS[kind]}: what happened (optional${kind === "other" ? ", required for other" : ""})`}
                  />
                </RadioGroup>
              ))}
            </section>
            <div className="flex flex-wrap gap-3">
              <button type="submit" className="btn-primary min-h-12 min-w-40 text-lg" disabled={busy}>
                {busy ? "Saving…" : "Save session"}
              </button>
              <Link to="/train" className="btn-quiet inline-flex min-h-12 items-center">
                Cancel
              </Link>
            </div>
          </ActionForm>
          <section id="no-show" className="card" aria-labelledby="ns-h">
            <ActionForm intent="no_show" result={result} className="grid gap-4">
              <div>
                <h2 id="ns-h" className="text-lg font-semibold">
                  The trainee did not come
                </h2>
                <p className="text-sm text-ink-soft">Record a no-show with its reason instead of a log.</p>
              </div>
              <RadioGroup
                name="reason"
                legend="Reason"
                options={NO_SHOW_REASONS.map((r) => ({ value: r, label: NO_SHOW_LABELS[r] }))}
              >
                <TextField name="reasonNote" label="Other reason: what happened (required for other)" />
              </RadioGroup>
              <div>
                <button type="submit" className="btn-quiet min-h-12 min-w-40 text-lg" disabled={busy}>
                  Record no-show
                </button>
              </div>
            </ActionForm>
          </section>
        </>
      )}
      {!open && <DeviceCautions compact reader="trainer" />}
    </div>
  );
}

type SessionData = Route.ComponentProps["loaderData"];

/** What was saved on the session, as stored: the log's values, adverse events and findings, or the no-show's reason. */
function Recorded({
  s,
  mark,
  timeZone,
  result,
  busy,
}: {
  s: SessionData["session"];
  mark: SessionData["mark"];
  timeZone: string;
  result: ReturnType<typeof useActionData<typeof action>>;
  busy: boolean;
}) {
  const what = s.status === "attended" ? "log" : "no-show";
  return (
    <section className="card grid gap-3" aria-labelledby="saved-h" data-testid="recorded">
      <h2 id="saved-h" className="text-lg font-semibold">
        Recorded as {s.status === "attended" ? "attended" : s.status.replace("_", "-")}
      </h2>
      {s.status === "attended" && (
        <dl className="grid gap-x-4 gap-y-1 sm:grid-cols-[max-content_1fr]">
          <dt className="text-ink-soft">Started</dt>
          <dd>{mark?.loggedAt ? formatInstant(mark.loggedAt, timeZone) : "—"}</dd>
          <dt className="text-ink-soft">Practice time</dt>
          <dd>{mark?.durationHours != null ? `${Math.round(mark.durationHours * 60)} minutes` : "—"}</dd>
          <dt className="text-ink-soft">Task score</dt>
          <dd>{mark?.taskScore != null ? String(mark.taskScore) : "—"}</dd>
          <dt className="text-ink-soft">Hours so far</dt>
          <dd>{mark?.cumulativeHours != null ? `${mark.cumulativeHours.toFixed(1)} h` : "—"}</dd>
          <dt className="text-ink-soft">Notes</dt>
          <dd>{mark?.notes || "none"}</dd>
          <dt className="text-ink-soft">Adverse events</dt>
          <dd>
            {s.events.length === 0 ? (
              "none"
            ) : (
              <ul className="list-disc pl-5">
                {s.events.map((e) => (
                  <li key={e.id}>
                    {ADVERSE_LABELS[e.kind]}: {e.severity}
                    {e.notes ? ` (${e.notes})` : ""}
                  </li>
                ))}
              </ul>
            )}
          </dd>
          <dt className="text-ink-soft">Safety findings</dt>
          <dd>
            {!mark?.findings.length ? (
              "none"
            ) : (
              <ul className="list-disc pl-5">
                {mark.findings.map((f) => (
                  <li key={f}>{f}</li>
                ))}
              </ul>
            )}
          </dd>
        </dl>
      )}
      {s.status === "no_show" && <p>Reason: {noShowText(mark?.noShowReason ?? null, mark?.noShowNote ?? null)}</p>}
      {mark && (s.status === "attended" || s.status === "no_show") && (
        <div className="border-t border-line pt-3">
          {mark.undoRefusal == null ? (
            <ActionForm intent="undo" result={result} className="grid gap-2">
              <p className="text-sm text-ink-soft">
                A mistake? You can undo your last mark until the end of today ({timeZone} time); the session is then to
                do again.
              </p>
              <div>
                <button type="submit" className="btn-quiet min-h-12" disabled={busy}>
                  Undo this {what}
                </button>
              </div>
            </ActionForm>
          ) : mark.undoRefusal === SEVERE_STAYS ? (
            <p className="text-sm" data-testid="undo-refused">
              {SEVERE_STAYS}
            </p>
          ) : (
            <p className="text-sm text-ink-soft" data-testid="undo-refused">
              Undo: {mark.undoRefusal}
            </p>
          )}
        </div>
      )}
    </section>
  );
}

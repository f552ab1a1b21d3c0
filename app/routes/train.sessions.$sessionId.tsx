import { data, Link, redirect, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { ActionForm, ActionNotice, FieldMessage, RadioGroup, TextArea, TextField } from "~/components/fields";
import { addMinutesToWallClock, formatDay, formatInstantDay, formatSpan, toLocalInput, wallClockNow } from "~/dates";
import { formAction } from "~/forms.server";
import { recordAccess } from "~/models/access-log.server";
import { logTrainerSession, markNoShow, trainerForUser, trainerSession } from "~/models/trainer-day.server";
import {
  ADVERSE_KINDS,
  ADVERSE_LABELS,
  attendanceSchema,
  SEVERITIES,
  scoreRead,
  trainerLogSchema,
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
  return { session, timeZone: trainer.timeZone, now: wallClockNow(trainer.timeZone) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const formData = await request.formData();
  // Marking a no-show and logging a session need different permissions: the intent picks which, before parsing.
  if (formData.get("intent") === "no_show") {
    const { p, trainer, session } = await load(request, params, "sessions.own");
    return formAction(formData, attendanceSchema, async () => {
      await markNoShow(trainer.id, session.id, p.user.id);
      throw redirect("/train");
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
  const { session: s, timeZone, now } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const done = Boolean(result?.notice);
  const open = s.status === "scheduled" && s.courseStatus !== "paused" && !done;
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
      {s.courseStatus === "paused" && !done && (
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
      {s.status !== "scheduled" && !done && (
        <section className="card">
          <p>
            Recorded as <strong>{s.status.replace("_", "-")}</strong>
            {s.taskScore != null ? ` · task score ${s.taskScore.toFixed(2)}` : ""}
            {s.durationHours != null ? ` · ${s.durationHours.toFixed(2)} h` : ""}.
          </p>
          {s.events.length > 0 && (
            <ul className="mt-2 list-disc pl-5">
              {s.events.map((e) => (
                <li key={e.id}>
                  {ADVERSE_LABELS[e.kind]}: {e.severity}
                  {e.notes ? ` (${e.notes})` : ""}
                </li>
              ))}
            </ul>
          )}
        </section>
      )}
      {open && (
        <>
          <DeviceCautions compact reader="trainer" />
          <ActionForm result={result} className="grid gap-5">
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
              <button
                type="submit"
                className="btn-primary min-h-12 min-w-40 text-lg"
                name="intent"
                value="log"
                disabled={busy}
              >
                {busy ? "Saving…" : "Save session"}
              </button>
              <Link to="/train" className="btn-quiet inline-flex min-h-12 items-center">
                Cancel
              </Link>
            </div>
          </ActionForm>
        </>
      )}
      {!open && <DeviceCautions compact reader="trainer" />}
    </div>
  );
}

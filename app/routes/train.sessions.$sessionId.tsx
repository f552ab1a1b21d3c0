import { data, Form, Link, redirect, useActionData, useNavigation } from "react-router";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { FormError, Notice, TextArea, TextField } from "~/components/fields";
import { addMinutesToWallClock, formatDay, formatSpan, toLocalInput, wallClockNow } from "~/dates";
import { recordAccess } from "~/models/access-log.server";
import {
  logTrainerSession,
  markNoShow,
  SessionLogError,
  TrainerDayError,
  trainerForUser,
  trainerSession,
} from "~/models/trainer-day.server";
import { formToObject, parseWith } from "~/schemas/form";
import { ADVERSE_KINDS, ADVERSE_LABELS, attendanceSchema, SEVERITIES, trainerLogSchema } from "~/schemas/session-log";
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
  const form = formToObject(await request.formData());
  if (form.intent === "no_show") {
    const { p, trainer, session } = await load(request, params, "sessions.own");
    const parsed = parseWith(attendanceSchema, form);
    if (!parsed.ok) return data({ errors: parsed.errors, done: null }, { status: 400 });
    try {
      await markNoShow(trainer.id, session.id, p.user.id);
    } catch (e) {
      if (e instanceof TrainerDayError) return data({ errors: { _form: e.message }, done: null }, { status: 409 });
      throw e;
    }
    return redirect("/train");
  }
  const { p, trainer, session } = await load(request, params, "sessions.log");
  const parsed = parseWith(trainerLogSchema, form);
  if (!parsed.ok) return data({ errors: parsed.errors, done: null }, { status: 400 });
  try {
    const r = await logTrainerSession({ trainer, sessionId: session.id, userId: p.user.id, form: parsed.data });
    const parts = [`Session logged: ${r.cumulativeHours.toFixed(1)} h practised so far.`];
    if (r.proficient) parts.push("The proficiency criterion is met.");
    else if (r.remainingHours != null) parts.push(`About ${r.remainingHours.toFixed(1)} h to go.`);
    if (r.eventCount) parts.push(`${r.eventCount} adverse event${r.eventCount === 1 ? "" : "s"} recorded.`);
    if (r.paused)
      parts.push(
        `Training is paused for a severe event; ${r.notified.length ? `the assessors (${r.notified.length}) have been e-mailed` : "no assessor covers this worker's site: tell occupational health directly"}.`,
      );
    return { errors: null, done: parts.join(" "), paused: r.paused };
  } catch (e) {
    if (e instanceof SessionLogError || e instanceof TrainerDayError)
      return data({ errors: { [(e as { field?: string }).field ?? "_form"]: e.message }, done: null }, { status: 409 });
    throw e;
  }
}

export default function TrainerSession({ loaderData }: Route.ComponentProps) {
  const { session: s, timeZone, now } = loaderData;
  const result = useActionData<typeof action>();
  const busy = useNavigation().state === "submitting";
  const errors = (result?.errors ?? {}) as Record<string, string>;
  const open = s.status === "scheduled" && s.courseStatus !== "paused" && !result?.done;
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
      {result?.done && <Notice>{result.done}</Notice>}
      {s.courseStatus === "paused" && !result?.done && (
        <p role="alert" className="rounded-md bg-alert-wash p-3 text-alert">
          Training on this device is paused{s.pauseReason ? `: ${s.pauseReason}` : ""}. Do not train until an assessor
          resumes it.
        </p>
      )}
      {s.status !== "scheduled" && !result?.done && (
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
          <DeviceCautions compact />
          <Form method="post" className="grid gap-5" noValidate>
            <FormError message={errors._form} />
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
                error={errors.start}
              />
              <TextField
                name="end"
                type="datetime-local"
                label="End"
                required
                defaultValue={toLocalInput(defaultEnd)}
                error={errors.end}
                hint={`Practice time within the wear-time limit: ${s.wearTimeLimitMinutes} minutes.`}
              />
              {errors.durationHours && <p className="field-error sm:col-span-2">{errors.durationHours}</p>}
              <TextField
                name="taskScore"
                type="text"
                label="Task score (0–1)"
                required
                error={errors.taskScore}
                hint={`Score on the ${s.deviceType}'s standard task, e.g. 0.72.`}
              />
              <div className="sm:col-span-2">
                <TextArea name="notes" label="Notes" rows={3} error={errors.notes} />
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
                <fieldset
                  key={kind}
                  className="grid gap-2 border-t border-line pt-3"
                  aria-describedby={errors[`ae_${kind}`] ? `ae_${kind}-error` : undefined}
                >
                  <legend className="font-medium">{ADVERSE_LABELS[kind]}</legend>
                  <div className="flex flex-wrap gap-2">
                    {(["none", ...SEVERITIES] as const).map((sev) => (
                      <label
                        key={sev}
                        className="flex min-h-12 min-w-24 cursor-pointer items-center gap-2 rounded-md border border-line px-3 has-[:checked]:border-spruce-700 has-[:checked]:bg-spruce-50"
                      >
                        <input
                          type="radio"
                          name={`ae_${kind}`}
                          value={sev}
                          defaultChecked={sev === "none"}
                          className="size-5"
                        />
                        <span className="capitalize">{sev}</span>
                      </label>
                    ))}
                  </div>
                  {errors[`ae_${kind}`] && (
                    <p id={`ae_${kind}-error`} className="field-error">
                      {errors[`ae_${kind}`]}
                    </p>
                  )}
                  <TextField
                    name={`ae_${kind}_notes`}
                    label={`${ADVERSE_LABELS[kind]}: what happened (optional${kind === "other" ? ", required for other" : ""})`}
                    error={errors[`ae_${kind}_notes`]}
                  />
                </fieldset>
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
          </Form>
        </>
      )}
      {!open && <DeviceCautions compact />}
    </div>
  );
}

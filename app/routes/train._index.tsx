import { Link } from "react-router";
import { z } from "zod";
import { requireUser } from "~/auth/guard.server";
import { DeviceCautions } from "~/components/device-cautions";
import { WorkQueue } from "~/components/work-queue";
import { formatDay, formatSpan, isIsoDate, nowDate } from "~/dates";
import { UserError } from "~/errors";
import { answerUserErrors } from "~/forms.server";
import { trainerProfileForUser } from "~/models/fleet.server";
import { type ScheduledSession, trainerDay, trainerForUser } from "~/models/trainer-day.server";
import { trainerQueue } from "~/models/work-queues.server";
import type { Route } from "./+types/train._index";

export const meta: Route.MetaFunction = () => [{ title: "My training days · Limberly" }];

// The trainer's own schedule only: the trainer is the signed-in user (trainers.user_id). The day view names
// trainees, devices and times but no scores or events (those are on the session page, whose reads are logged).
/** `?day=YYYY-MM-DD` shows that day and its week; without it, today. */
const dayQuerySchema = z.object({
  day: z.string().refine(isIsoDate, { message: "Day: give a date as YYYY-MM-DD." }).optional(),
});

export async function loader({ request }: Route.LoaderArgs) {
  return answerUserErrors(async () => {
    const p = await requireUser(request, "sessions.own");
    const parsed = dayQuerySchema.safeParse(Object.fromEntries(new URL(request.url).searchParams));
    if (!parsed.success) throw new UserError(parsed.error.issues[0].message, { field: "day" });
    const trainer = await trainerForUser(p.user.id);
    return {
      name: p.user.displayName,
      profile: await trainerProfileForUser(p.user.id),
      day: trainer ? await trainerDay(trainer.id, nowDate(), undefined, parsed.data.day) : null,
      queue: trainer ? await trainerQueue(trainer.id) : null,
    };
  });
}

const STATUS_WORDS: Record<string, string> = {
  scheduled: "To do",
  attended: "Logged",
  no_show: "No-show",
  cancelled: "Cancelled",
};

function SessionCard({ s, showDay, now }: { s: ScheduledSession; showDay?: boolean; now: string }) {
  const paused = s.courseStatus === "paused";
  // A session still to do whose time has passed is overdue: its log is missing.
  const overdue = s.status === "scheduled" && (s.end ?? s.start ?? now) < now;
  return (
    <li className="rounded-lg border border-line bg-white p-4" data-testid={`session-${s.id}`}>
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <p className="text-lg font-semibold">
          {s.start ? `${showDay ? `${formatDay(s.start)} · ` : ""}${formatSpan(s.start, s.end)}` : "Unscheduled"}
        </p>
        <p
          className={
            overdue
              ? "font-semibold text-alert"
              : s.status === "scheduled"
                ? "font-semibold text-amber-caution"
                : "text-ink-soft"
          }
        >
          {overdue ? "Overdue: log it" : (STATUS_WORDS[s.status] ?? s.status)}
        </p>
      </div>
      <p className="mt-1">
        <span className="font-medium">{s.trainee}</span> <span className="text-ink-soft">· {s.employeeNumber}</span>
      </p>
      <p>
        {s.deviceType}
        {s.unit ? <span className="text-ink-soft"> · unit {s.unit}</span> : null}
      </p>
      <p className="text-sm text-ink-soft">Where: {s.place}</p>
      {paused && (
        <p className="mt-2 rounded-md bg-alert-wash p-2 text-sm text-alert">
          Training on this device is paused{s.pauseReason ? `: ${s.pauseReason}` : ""}. Do not train until an assessor
          resumes it.
        </p>
      )}
      {s.status === "scheduled" && !paused && (
        <div className="mt-3 flex flex-wrap gap-3">
          <Link
            to={`/train/sessions/${s.id}`}
            className="btn-primary inline-flex min-h-12 min-w-32 items-center justify-center text-lg"
          >
            Attended: log it
          </Link>
          <Link
            to={`/train/sessions/${s.id}#no-show`}
            className="btn-quiet inline-flex min-h-12 min-w-32 items-center justify-center text-lg"
            aria-label={`No-show: ${s.trainee}, ${s.start ? formatSpan(s.start, s.end) : ""}`}
          >
            No-show…
          </Link>
        </div>
      )}
      {s.status !== "scheduled" && (
        <p className="mt-2 text-sm">
          <Link to={`/train/sessions/${s.id}`} className="text-spruce-700 underline">
            Details
          </Link>
        </p>
      )}
    </li>
  );
}

export default function TrainHome({ loaderData }: Route.ComponentProps) {
  const { name, profile, day, queue } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="page-title" data-testid="role-home">
          My training days
        </h1>
        <p className="text-ink-soft">
          {name}
          {profile
            ? ` · ${profile.site} · up to ${profile.traineesPerSession} trainee${profile.traineesPerSession > 1 ? "s" : ""} per session`
            : ""}
        </p>
      </div>
      {queue && <WorkQueue items={queue} />}
      {!profile && (
        <p className="card">
          You have the trainer role but no trainer profile yet. Ask your training coordinator to add you.
        </p>
      )}
      {day && (
        <>
          <nav aria-label="Days and weeks" className="flex flex-wrap gap-2" data-testid="day-nav">
            <Link className="btn-quiet" to={`?day=${day.previousWeek}`}>
              ← Week
            </Link>
            <Link className="btn-quiet" to={`?day=${day.previousDay}`}>
              ← Day
            </Link>
            <Link className="btn-quiet" to="/train" aria-current={day.isToday ? "page" : undefined}>
              Today
            </Link>
            <Link className="btn-quiet" to={`?day=${day.nextDay}`}>
              Day →
            </Link>
            <Link className="btn-quiet" to={`?day=${day.nextWeek}`}>
              Week →
            </Link>
          </nav>
          <section aria-labelledby="today-h" className="grid gap-3">
            <h2 id="today-h" className="text-xl font-semibold">
              {day.isToday ? "Today" : "Day shown"} · {formatDay(day.date)}
            </h2>
            <p className="text-sm text-ink-soft">Times are {day.timeZone} time, the clock of your site.</p>
            {day.today.length === 0 ? (
              <p className="card text-ink-soft">{day.isToday ? "No sessions today." : "No sessions on this day."}</p>
            ) : (
              <ul className="grid gap-3" data-testid="today">
                {day.today.map((s) => (
                  <SessionCard key={s.id} s={s} now={day.now} />
                ))}
              </ul>
            )}
          </section>
          <section aria-labelledby="week-h" className="grid gap-3">
            <h2 id="week-h" className="text-xl font-semibold">
              {day.isToday ? "Rest of this week" : "Rest of that week"}
            </h2>
            {day.rest.length === 0 ? (
              <p className="card text-ink-soft">Nothing else this week.</p>
            ) : (
              <ul className="grid gap-3" data-testid="week">
                {day.rest.map((s) => (
                  <SessionCard key={s.id} s={s} showDay now={day.now} />
                ))}
              </ul>
            )}
          </section>
          {day.waiting.length > 0 && (
            <section aria-labelledby="waiting-h" className="grid gap-3">
              <h2 id="waiting-h" className="text-xl font-semibold">
                Earlier sessions still to log
              </h2>
              <ul className="grid gap-3" data-testid="waiting">
                {day.waiting.map((s) => (
                  <SessionCard key={s.id} s={s} showDay now={day.now} />
                ))}
              </ul>
            </section>
          )}
        </>
      )}
      {profile && (
        <section className="card">
          <h2 className="font-semibold">Certified to train</h2>
          <ul className="list-disc pl-5">
            {profile.certifications.map((c) => (
              <li key={c.name}>
                {c.name} (since {c.since})
              </li>
            ))}
          </ul>
        </section>
      )}
      <DeviceCautions compact reader="trainer" />
    </div>
  );
}

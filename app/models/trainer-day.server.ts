import {
  dayAndWeekIn,
  hoursBetween,
  type Instant,
  nowInstant,
  wallClock,
  wallClockExists,
  wallClockToInstant,
} from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import { conflict } from "~/errors";
import type { TrainerLogInput } from "~/schemas/session-log";
import { adverseEventsFrom } from "~/schemas/session-log";
import { eventsForSessions, notifyAssessorsOfSevereEvents, recordAdverseEvents } from "./adverse-events.server";
import { courseReviewStatus, effectiveWearLimit } from "./course-reviews.server";
import { logSessionResult, SessionLogError } from "./progress.server";

// The trainer's day: sessions on the trainer's own schedule only. Every function here takes the
// trainer id resolved from the signed-in user (trainers.user_id), never from the URL.

export { SessionLogError };

export interface TrainerRef {
  id: number;
  siteId: number;
  site: string;
  /** The site's IANA zone: session times are its wall-clock times. */
  timeZone: string;
  name: string;
}

export async function trainerForUser(userId: number, k: Db = db()): Promise<TrainerRef | null> {
  const t = await k("trainers as t")
    .join("sites as s", "s.id", "t.site_id")
    .join("users as u", "u.id", "t.user_id")
    .where("t.user_id", userId)
    .first("t.id", "t.site_id", "s.name as site", "s.time_zone", "u.display_name");
  return t ? { id: t.id, siteId: t.site_id, site: t.site, timeZone: t.time_zone, name: t.display_name } : null;
}

export interface ScheduledSession {
  id: number;
  workerId: number;
  employeeNumber: string;
  trainee: string;
  deviceTypeId: number;
  deviceType: string;
  deviceCode: string;
  unit: string | null;
  place: string;
  start: string | null;
  end: string | null;
  status: string;
  taskScore: number | null;
  durationHours: number | null;
  courseStatus: string | null;
  pauseReason: string | null;
  wearTimeLimitMinutes: number;
}

function sessionQuery(k: Db, trainerId: number) {
  return k("training_sessions as ts")
    .join("workers as w", "w.id", "ts.worker_id")
    .join("device_types as d", "d.id", "ts.device_type_id")
    .leftJoin("device_units as u", "u.id", "ts.device_unit_id")
    .leftJoin("sites as us", "us.id", "u.site_id")
    .join("trainers as tr", "tr.id", "ts.trainer_id")
    .join("sites as ts_site", "ts_site.id", "tr.site_id")
    .leftJoin("device_courses as c", function () {
      this.on("c.worker_id", "ts.worker_id").andOn("c.device_type_id", "ts.device_type_id");
    })
    .where("ts.trainer_id", trainerId)
    .select(
      "ts.id",
      "ts.worker_id",
      "w.employee_number",
      "w.given_name",
      "w.family_name",
      "ts.device_type_id",
      "d.name as device_name",
      "d.code as device_code",
      "d.wear_time_limit_minutes",
      "u.serial",
      "us.name as unit_site",
      "ts_site.name as trainer_site",
      "ts.scheduled_start",
      "ts.scheduled_end",
      "ts.status",
      "ts.task_score",
      "ts.duration_hours",
      "c.status as course_status",
      "c.pause_reason",
      "c.wear_time_limit_minutes as own_wear_limit",
    );
}

function toSession(r: Row): ScheduledSession {
  return {
    id: r.id,
    workerId: r.worker_id,
    employeeNumber: r.employee_number,
    trainee: `${r.given_name} ${r.family_name}`,
    deviceTypeId: r.device_type_id,
    deviceType: r.device_name,
    deviceCode: r.device_code,
    unit: r.serial ?? null,
    place: r.unit_site ?? r.trainer_site,
    start: r.scheduled_start ? wallClock(r.scheduled_start) : null,
    end: r.scheduled_end ? wallClock(r.scheduled_end) : null,
    status: r.status,
    taskScore: r.task_score == null ? null : Number(r.task_score),
    durationHours: r.duration_hours == null ? null : Number(r.duration_hours),
    courseStatus: r.course_status ?? null,
    pauseReason: r.pause_reason ?? null,
    wearTimeLimitMinutes: effectiveWearLimit(Number(r.wear_time_limit_minutes), r.own_wear_limit),
  };
}

/** The schedule view leaves out results (scores, practice time): those are read, and logged, on the session page. */
function scheduleOnly(r: Row): ScheduledSession {
  return { ...toSession(r), taskScore: null, durationHours: null };
}

/**
 * The trainer's sessions for today and this week (Monday to Sunday) on the clock of the trainer's site, and
 * earlier scheduled sessions still waiting to be logged.
 */
export async function trainerDay(trainerId: number, now: Instant | Date = new Date(), k: Db = db()) {
  const site = await k("trainers as t")
    .join("sites as s", "s.id", "t.site_id")
    .where("t.id", trainerId)
    .first("s.time_zone");
  const timeZone: string = site.time_zone;
  const w = { ...dayAndWeekIn(timeZone, now), timeZone };
  const week = (
    await sessionQuery(k, trainerId)
      .where("ts.scheduled_start", ">=", w.weekStart)
      .where("ts.scheduled_start", "<", w.weekEnd)
      .whereNot("ts.status", "cancelled")
      .orderBy("ts.scheduled_start")
  ).map(scheduleOnly);
  const waiting = (
    await sessionQuery(k, trainerId)
      .where("ts.status", "scheduled")
      .where("ts.scheduled_start", "<", w.weekStart)
      .orderBy("ts.scheduled_start")
      .limit(50)
  ).map(scheduleOnly);
  const today = week.filter((s) => s.start != null && s.start >= w.dayStart && s.start < w.dayEnd);
  const rest = week.filter((s) => !today.includes(s));
  return { ...w, today, rest, waiting };
}

/** One session, only if it is on this trainer's schedule (else null: the caller answers 403). */
export async function trainerSession(trainerId: number, sessionId: number, k: Db = db()) {
  const r = await sessionQuery(k, trainerId).where("ts.id", sessionId).first();
  if (!r) return null;
  const s = toSession(r);
  return {
    ...s,
    events: await eventsForSessions([s.id], k),
    review: await courseReviewStatus(s.workerId, s.deviceTypeId, k),
  };
}

export async function markNoShow(trainerId: number, sessionId: number, userId: number): Promise<void> {
  await db().transaction(async (trx) => {
    const s = await trx("training_sessions").where({ id: sessionId, trainer_id: trainerId }).first("id", "status");
    if (!s) throw conflict("This session is not on your schedule.");
    if (s.status !== "scheduled") throw conflict(`This session is already recorded as ${s.status.replace("_", "-")}.`);
    await trx("training_sessions")
      .where({ id: s.id })
      .update({ status: "no_show", logged_by: userId, logged_at: nowInstant() });
  });
}

export interface TrainerLogResult {
  cumulativeHours: number;
  proficient: boolean;
  remainingHours: number | null;
  eventCount: number;
  paused: boolean;
  notified: string[];
  /** Saved over the wear-time limit: the breach is a safety finding the assessors see. */
  wearTimeBreach: { minutes: number; limitMinutes: number } | null;
}

/**
 * Logs a scheduled session as attended: the result goes through logSessionResult (cumulative hours,
 * course, proficiency, stage and forecast), the adverse events and any pause in the SAME transaction.
 * Severe events then e-mail the worker's assessors.
 */
export async function logTrainerSession(input: {
  trainer: TrainerRef;
  sessionId: number;
  userId: number;
  form: TrainerLogInput;
}): Promise<TrainerLogResult> {
  const events = adverseEventsFrom(input.form);
  const zone = input.trainer.timeZone;
  for (const [field, w] of [
    ["start", input.form.start],
    ["end", input.form.end],
  ] as const)
    if (!wallClockExists(w, zone))
      throw conflict(
        `${field === "start" ? "Start" : "End"}: ${w.slice(11, 16)} does not exist on ${w.slice(0, 10)} in ${zone} (the clocks go forward then).`,
        field,
      );
  // The wall-clock times are the site's; the log records the instant and the time elapsed (DST-aware).
  const at = wallClockToInstant(input.form.start, zone);
  const durationHours = Math.round(hoursBetween(input.form.start, input.form.end, zone) * 1000) / 1000;
  const done = await db().transaction(async (trx) => {
    const s = await trx("training_sessions")
      .where({ id: input.sessionId, trainer_id: input.trainer.id })
      .first("id", "worker_id", "device_type_id", "status");
    if (!s) throw conflict("This session is not on your schedule.");
    if (s.status !== "scheduled")
      throw conflict(`This session is already recorded as ${String(s.status).replace("_", "-")}.`);
    const r = await logSessionResult(
      {
        workerId: s.worker_id,
        deviceTypeId: s.device_type_id,
        durationHours,
        taskScore: input.form.taskScore,
        notes: input.form.notes ?? null,
        loggedBy: input.userId,
        trainerId: input.trainer.id,
        sessionId: s.id,
        at,
      },
      trx,
    );
    // The planned times stay as scheduled; the actual start is logged_at and the length is duration_hours.
    const ev = await recordAdverseEvents(trx, {
      sessionId: s.id,
      workerId: s.worker_id,
      deviceTypeId: s.device_type_id,
      events,
      userId: input.userId,
      at,
    });
    return { r, ev, workerId: s.worker_id as number, deviceTypeId: s.device_type_id as number };
  });
  const notified = done.ev.paused
    ? await notifyAssessorsOfSevereEvents({
        workerId: done.workerId,
        deviceTypeId: done.deviceTypeId,
        events: events.filter((e) => e.severity === "severe"),
        trainerName: input.trainer.name,
        at,
      })
    : [];
  const f = done.r.forecast;
  return {
    cumulativeHours: done.r.cumulativeHours,
    proficient: done.r.proficient,
    remainingHours: f.status === "ready" ? (f.progress?.remainingHours ?? null) : null,
    eventCount: done.ev.count,
    paused: done.ev.paused,
    notified,
    wearTimeBreach: done.r.wearTimeBreach,
  };
}

import {
  addDays,
  dayAndWeekIn,
  dayAndWeekOf,
  hoursBetween,
  type Instant,
  type IsoDate,
  nowDate,
  nowInstant,
  wallClockExists,
  wallClockNow,
  wallClockToInstant,
} from "~/dates";
import { type Db, db } from "~/db.server";
import { conflict } from "~/errors";
import type { TrainerLogInput } from "~/schemas/session-log";
import { adverseEventsFrom } from "~/schemas/session-log";
import { eventsForSessions, notifyAssessorsOfSevereEvents, recordAdverseEvents } from "./adverse-events.server";
import { courseReviewStatus } from "./course-reviews.server";
import { logSessionResult } from "./progress.server";
import { type SessionOnSchedule, scheduleSessions } from "./schedule.server";

// The trainer's day: sessions on the trainer's own schedule only. Every function here takes the
// trainer id resolved from the signed-in user (trainers.user_id), never from the URL.

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

function toSession(r: SessionOnSchedule): ScheduledSession {
  return {
    id: r.id,
    workerId: r.workerId,
    employeeNumber: r.employeeNumber,
    trainee: r.worker,
    deviceTypeId: r.deviceTypeId,
    deviceType: r.deviceType,
    deviceCode: r.deviceCode,
    unit: r.unit,
    place: r.place,
    start: r.start,
    end: r.end,
    status: r.status,
    taskScore: r.taskScore,
    durationHours: r.durationHours,
    courseStatus: r.courseStatus,
    pauseReason: r.pauseReason,
    wearTimeLimitMinutes: r.wearTimeLimitMinutes,
  };
}

const NOT_CANCELLED = ["scheduled", "attended", "no_show"];

/** The schedule view leaves out results (scores, practice time): those are read, and logged, on the session page. */
function scheduleOnly(r: SessionOnSchedule): ScheduledSession {
  return { ...toSession(r), taskScore: null, durationHours: null };
}

/**
 * The trainer's sessions for one day (today unless `shown` names another) and the rest of its week (Monday to
 * Sunday) on the clock of the trainer's site, and sessions before this week still waiting to be logged.
 */
export async function trainerDay(trainerId: number, now: Instant | Date = nowDate(), k: Db = db(), shown?: IsoDate) {
  const site = await k("trainers as t")
    .join("sites as s", "s.id", "t.site_id")
    .where("t.id", trainerId)
    .first("s.time_zone");
  const timeZone: string = site.time_zone;
  const real = dayAndWeekIn(timeZone, now);
  const w = { ...(shown ? dayAndWeekOf(shown) : real), timeZone };
  const week = (
    await scheduleSessions({ trainerId, wallFrom: w.weekStart, wallTo: w.weekEnd, statuses: NOT_CANCELLED }, k)
  ).map(scheduleOnly);
  const waiting = (await scheduleSessions({ trainerId, from: null, wallTo: real.weekStart, limit: 50 }, k)).map(
    scheduleOnly,
  );
  const today = week.filter((s) => s.start != null && s.start >= w.dayStart && s.start < w.dayEnd);
  const rest = week.filter((s) => !today.includes(s));
  return {
    ...w,
    today,
    rest,
    waiting,
    isToday: w.date === real.date,
    todayDate: real.date,
    /** Now on the site's clock: a session still to do that ended before it is overdue. */
    now: wallClockNow(timeZone, now),
    previousDay: addDays(w.date, -1),
    nextDay: addDays(w.date, 1),
    previousWeek: addDays(w.date, -7),
    nextWeek: addDays(w.date, 7),
  };
}

/** One session, only if it is on this trainer's schedule (else null: the caller answers 403). */
export async function trainerSession(trainerId: number, sessionId: number, k: Db = db()) {
  const [r] = await scheduleSessions({ trainerId, sessionId, statuses: [...NOT_CANCELLED, "cancelled"] }, k);
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
    return { r, ev, workerId: s.worker_id, deviceTypeId: s.device_type_id };
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

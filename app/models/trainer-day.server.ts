import type { Principal } from "~/auth/guard.server";
import {
  addDays,
  dateIn,
  dayAndWeekIn,
  dayAndWeekOf,
  formatDay,
  hoursBetween,
  type Instant,
  type IsoDate,
  nowDate,
  nowInstant,
  todayIn,
  wallClockExists,
  wallClockNow,
  wallClockToInstant,
} from "~/dates";
import { type Db, db, type TableRow } from "~/db.server";
import type { Stage } from "~/domain/stages";
import { conflict } from "~/errors";
import { adverseEventsFrom, type NoShowInput, SEVERE_STAYS, type TrainerLogInput } from "~/schemas/session-log";
import { recordAccess } from "./access-log.server";
import { eventsForSessions, notifyAssessorsOfSevereEvents, recordAdverseEvents } from "./adverse-events.server";
import { setStage } from "./consent.server";
import { courseReviewStatus } from "./course-reviews.server";
import { upsertForecast } from "./forecast.server";
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

const NOT_YOURS = "This session is not on your schedule.";

/**
 * What the trainer recorded on one of their sessions, as saved (notes, no-show reason, wear-time findings), and
 * whether this user may undo it now (or why not).
 */
export async function sessionMark(trainer: TrainerRef, sessionId: number, userId: number, k: Db = db()) {
  const s = await k("training_sessions").where({ id: sessionId, trainer_id: trainer.id }).first();
  if (!s) return null;
  const findings = await k("safety_findings").where({ session_id: s.id }).orderBy("id").select("detail");
  return {
    loggedAt: s.logged_at,
    durationHours: s.duration_hours == null ? null : Number(s.duration_hours),
    taskScore: s.task_score == null ? null : Number(s.task_score),
    cumulativeHours: s.cumulative_hours == null ? null : Number(s.cumulative_hours),
    notes: s.notes,
    noShowReason: s.no_show_reason,
    noShowNote: s.no_show_note,
    findings: findings.map((f) => f.detail),
    undoRefusal: await markUndoRefusal(k, trainer, s, userId),
  };
}
const recordedAs = (status: string) => `This session is already recorded as ${status.replace("_", "-")}.`;

/** Records that the trainee did not come, with the reason the trainer chose. */
export async function markNoShow(
  trainerId: number,
  sessionId: number,
  userId: number,
  reason: Pick<NoShowInput, "reason" | "reasonNote">,
): Promise<void> {
  await db().transaction(async (trx) => {
    const s = await trx("training_sessions").where({ id: sessionId, trainer_id: trainerId }).first("id", "status");
    if (!s) throw conflict(NOT_YOURS);
    if (s.status !== "scheduled") throw conflict(recordedAs(s.status));
    const at = nowInstant();
    await trx("training_sessions")
      .where({ id: s.id })
      .update({
        status: "no_show",
        logged_by: userId,
        logged_at: at,
        marked_at: at,
        no_show_reason: reason.reason,
        no_show_note: reason.reason === "other" ? (reason.reasonNote ?? null) : null,
      });
  });
}

/** What a log changed beyond the session row, kept on the row so that an undo puts it back exactly. */
interface UndoState {
  course: Pick<
    TableRow<"device_courses">,
    "status" | "cumulative_hours" | "started_on" | "proficient_on" | "hours_to_proficiency" | "updated_at"
  > | null;
  stage: Stage;
}

export interface UndoResult {
  mark: "attended" | "no_show";
  trainee: string;
  /** Mild or moderate adverse events and wear-time findings removed with the log. */
  eventsRemoved: number;
  findingsRemoved: number;
}

/**
 * Why this trainer may not undo the mark on this session now (null: they may). The one owner of the undo
 * rule: the session page asks it to offer the undo, undoLastMark asks it again inside its transaction.
 */
export async function markUndoRefusal(
  k: Db,
  trainer: TrainerRef,
  s: Pick<
    TableRow<"training_sessions">,
    "id" | "status" | "logged_by" | "marked_at" | "worker_id" | "device_type_id" | "cumulative_hours" | "undo_state"
  >,
  userId: number,
  now: Instant | Date = nowDate(),
): Promise<string | null> {
  if (s.status === "scheduled") return "This session has no mark to undo: it is still to do.";
  if (s.status !== "attended" && s.status !== "no_show") return recordedAs(s.status);
  if (s.logged_by !== userId || !s.marked_at)
    return "Only the trainer who made a mark can undo it, on the day it was made.";
  const zone = trainer.timeZone;
  const markedOn = dateIn(s.marked_at, zone);
  if (markedOn !== todayIn(zone, now))
    return `This ${s.status === "attended" ? "log" : "no-show"} was made on ${formatDay(markedOn)} (${zone} time). A mark can be undone only on the day it was made; it stays as recorded. Tell your training coordinator if it is wrong.`;
  const last = await k("training_sessions")
    .where({ trainer_id: trainer.id, logged_by: userId })
    .whereIn("status", ["attended", "no_show"])
    .whereNotNull("marked_at")
    .orderBy([
      { column: "marked_at", order: "desc" },
      { column: "id", order: "desc" },
    ])
    .first("id");
  if (last?.id !== s.id) return "Only your most recent mark can be undone; you have marked another session since.";
  if (s.status === "no_show") return null;
  if (await k("adverse_events").where({ session_id: s.id, severity: "severe" }).first("id")) return SEVERE_STAYS;
  const later = await k("training_sessions")
    .where({ worker_id: s.worker_id, device_type_id: s.device_type_id, status: "attended" })
    .whereNot("id", s.id)
    .where("cumulative_hours", ">=", Number(s.cumulative_hours))
    .first("id");
  if (later)
    return "A later session of this trainee on this device has been logged since; this log can no longer be undone.";
  if (!s.undo_state) return "This log was made before undo was possible; it stays as recorded.";
  return null;
}

/**
 * Undoes the trainer's own most recent mark (a log or a no-show), on the site-local day it was made, in one
 * transaction: the session is to do again; for a log, its non-severe adverse events and wear-time findings
 * go, the course, stage and proficiency are put back as they were and the forecast is recomputed. A log
 * with a severe adverse event is never undone. The undo is kept in session_mark_undos and the access log.
 */
export async function undoLastMark(input: {
  trainer: TrainerRef;
  sessionId: number;
  principal: Principal & { kind: "user" };
  request: Request;
}): Promise<UndoResult> {
  const userId = input.principal.user.id;
  return db().transaction(async (trx) => {
    const s = await trx("training_sessions").where({ id: input.sessionId, trainer_id: input.trainer.id }).first();
    if (!s) throw conflict(NOT_YOURS);
    const refusal = await markUndoRefusal(trx, input.trainer, s, userId);
    if (refusal) throw conflict(refusal);
    const mark = s.status as "attended" | "no_show";
    const events = await trx("adverse_events").where({ session_id: s.id }).select("kind", "severity", "notes");
    const worker = await trx("workers").where({ id: s.worker_id }).first("stage", "given_name", "family_name");
    const trainee = `${worker?.given_name ?? ""} ${worker?.family_name ?? ""}`.trim();
    const now = nowInstant();
    let findingsRemoved = 0;
    if (mark === "attended") {
      const before = JSON.parse(s.undo_state as string) as UndoState;
      const course = await trx("device_courses")
        .where({ worker_id: s.worker_id, device_type_id: s.device_type_id })
        .first("id", "status");
      if (course && !before.course) await trx("device_courses").where({ id: course.id }).del();
      else if (course && before.course)
        await trx("device_courses")
          .where({ id: course.id })
          .update({ ...before.course, updated_at: now });
      // Proficiency reached by this log goes with it.
      if (course?.status === "proficient" && before.course?.status !== "proficient")
        await trx("forecast_outcomes").where({ worker_id: s.worker_id, device_type_id: s.device_type_id }).del();
      // The log moved the stage forward (to training or proficient); a stage set otherwise since is left alone.
      if (worker && worker.stage !== before.stage && (worker.stage === "training" || worker.stage === "proficient")) {
        await setStage(trx, s.worker_id, before.stage, userId, now);
        await trx("stage_changes")
          .where({ worker_id: s.worker_id, to_stage: before.stage, at: now })
          .whereNull("device_type_id")
          .update({ device_type_id: s.device_type_id });
      }
      await trx("adverse_events").where({ session_id: s.id }).del();
      findingsRemoved = Number(await trx("safety_findings").where({ session_id: s.id }).del());
    }
    await trx("training_sessions").where({ id: s.id }).update({
      status: "scheduled",
      duration_hours: null,
      task_score: null,
      cumulative_hours: null,
      notes: null,
      logged_by: null,
      logged_at: null,
      marked_at: null,
      no_show_reason: null,
      no_show_note: null,
      undo_state: null,
    });
    if (mark === "attended") await upsertForecast(trx, s.worker_id, s.device_type_id, { actor: userId, now });
    await trx("session_mark_undos").insert({
      session_id: s.id,
      worker_id: s.worker_id,
      trainer_id: input.trainer.id,
      mark,
      marked_at: s.marked_at as string,
      removed: JSON.stringify(
        mark === "attended"
          ? {
              loggedAt: s.logged_at,
              durationHours: s.duration_hours,
              taskScore: s.task_score,
              notes: s.notes,
              adverseEvents: events,
              wearTimeFindings: findingsRemoved,
            }
          : { reason: s.no_show_reason, note: s.no_show_note },
      ),
      undone_by: userId,
      undone_at: now,
    });
    await recordAccess(input.principal, input.request, s.worker_id, "sessions", "undo", trx);
    return { mark, trainee, eventsRemoved: events.length, findingsRemoved };
  });
}

/**
 * The trainer's next session to log after this one: the first still to do (course not paused) later this
 * week on the site's clock, else the earliest one still to do this week; null when there is none.
 */
export async function nextSessionToLog(
  trainer: TrainerRef,
  after: { id: number; start: string | null },
  now: Instant | Date = nowDate(),
  k: Db = db(),
): Promise<ScheduledSession | null> {
  const w = dayAndWeekIn(trainer.timeZone, now);
  const open = (
    await scheduleSessions(
      { trainerId: trainer.id, wallFrom: w.weekStart, wallTo: w.weekEnd, statuses: ["scheduled"] },
      k,
    )
  )
    .map(scheduleOnly)
    .filter((s) => s.id !== after.id && s.start != null && s.courseStatus !== "paused");
  return open.find((s) => after.start == null || (s.start as string) >= after.start) ?? open[0] ?? null;
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
    if (!s) throw conflict(NOT_YOURS);
    if (s.status !== "scheduled") throw conflict(recordedAs(s.status));
    const courseBefore = await trx("device_courses")
      .where({ worker_id: s.worker_id, device_type_id: s.device_type_id })
      .first("status", "cumulative_hours", "started_on", "proficient_on", "hours_to_proficiency", "updated_at");
    const stageBefore = (await trx("workers").where({ id: s.worker_id }).first("stage"))?.stage;
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
    if (stageBefore) {
      const undo: UndoState = { course: courseBefore ?? null, stage: stageBefore };
      await trx("training_sessions")
        .where({ id: s.id })
        .update({ marked_at: nowInstant(), undo_state: JSON.stringify(undo) });
    }
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

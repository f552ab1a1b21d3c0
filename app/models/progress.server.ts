import type { Principal } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import type { CurveKind } from "~/compute/curve";
import { firstProficientIndex } from "~/compute/proficiency-rule";
import { curvePoints, type ProgressUpdate } from "~/compute/progress-update";
import { nowInstant } from "~/dates";
import { type Db, db, type TableRow } from "~/db.server";
import type { Stage } from "~/domain/stages";
import { conflict } from "~/errors";
import { noShowText } from "~/schemas/session-log";
import { latestConsent } from "./consent.server";
import { courseReviewStatus, effectiveWearLimit } from "./course-reviews.server";
import {
  forecastGap,
  gapText,
  loggedSessions,
  recordOutcome,
  type UpsertResult,
  upsertForecast,
  workerInScope,
} from "./forecast.server";
import { getCriterion } from "./proficiency.server";
import { whereWorkerInScope } from "./workers.server";

// Training progress on one device type and the one way a session result is logged.
// logSessionResult is shared with the trainer portal: cumulative hours, the course, proficiency, the stage
// and the forecast all change in the same transaction.

export interface LogSessionInput {
  workerId: number;
  deviceTypeId: number;
  durationHours: number;
  taskScore: number;
  notes?: string | null;
  loggedBy: number;
  /** The trainer who ran it (null when an assessor logs). */
  trainerId?: number | null;
  /** Fill a scheduled session instead of adding a new one. */
  sessionId?: number | null;
  /** Date-time of the session (default now). */
  at?: string;
}

export interface LogSessionResult {
  sessionId: number;
  cumulativeHours: number;
  proficient: boolean;
  proficientOn: string | null;
  forecast: UpsertResult;
  /** The session ran over the worker's wear-time limit (saved all the same, with a safety finding). */
  wearTimeBreach: { minutes: number; limitMinutes: number } | null;
}

export async function logSessionResult(input: LogSessionInput, k?: Db): Promise<LogSessionResult> {
  if (!(input.durationHours > 0 && input.durationHours <= 8))
    throw conflict("Duration must be more than 0 and at most 8 hours.", "durationHours");
  if (!(input.taskScore >= 0 && input.taskScore <= 1))
    throw conflict("Task score must be between 0 and 1.", "taskScore");
  const run = async (trx: Db): Promise<LogSessionResult> => {
    const at = input.at ?? nowInstant();
    const day = at.slice(0, 10);
    const worker = await trx("workers").where({ id: input.workerId }).first("id", "stage");
    if (!worker) throw conflict("That worker does not exist.");
    if (worker.stage === "withdrawn") throw conflict("This worker has withdrawn; sessions can no longer be logged.");
    const device = await trx("device_types").where({ id: input.deviceTypeId }).first("id", "wear_time_limit_minutes");
    if (!device) throw conflict("That device type does not exist.");
    let course = await trx("device_courses")
      .where({ worker_id: input.workerId, device_type_id: input.deviceTypeId })
      .first();
    if (course?.status === "proficient")
      throw conflict(
        "This worker has already reached proficiency on this device; no further sessions are logged here.",
      );
    if (course?.status === "stopped") throw conflict("This course was stopped; restart it before logging sessions.");
    if (course?.status === "paused")
      throw conflict(
        `This course is paused${course.pause_reason ? ` (${course.pause_reason})` : ""}; resume it before logging sessions.`,
      );
    // A session longer than the wear-time limit still happened: it is saved (with any adverse event) and the
    // breach is kept as a safety finding for the assessors, never a reason to refuse the log.
    const limit = effectiveWearLimit(Number(device.wear_time_limit_minutes), course?.wear_time_limit_minutes);
    const minutes = Math.round(input.durationHours * 60 * 10) / 10;
    const wearTimeBreach = minutes > limit + 1e-9 ? { minutes, limitMinutes: limit } : null;
    if (!course) {
      const [c] = await trx("device_courses")
        .insert({
          worker_id: input.workerId,
          device_type_id: input.deviceTypeId,
          status: "training",
          cumulative_hours: 0,
          started_on: day,
          updated_at: at,
        })
        .returning("*");
      course = c;
    }
    const cumulativeHours = Math.round((Number(course.cumulative_hours) + input.durationHours) * 1000) / 1000;
    const values = {
      status: "attended",
      duration_hours: input.durationHours,
      task_score: input.taskScore,
      cumulative_hours: cumulativeHours,
      notes: input.notes || null,
      logged_by: input.loggedBy,
      logged_at: at,
    } satisfies Partial<TableRow<"training_sessions">>;
    let sessionId: number;
    if (input.sessionId) {
      const s = await trx("training_sessions")
        .where({ id: input.sessionId, worker_id: input.workerId, device_type_id: input.deviceTypeId })
        .first("id", "status");
      if (!s) throw conflict("That scheduled session is not this worker's session on this device.");
      if (s.status === "attended") throw conflict("That session has already been logged.");
      await trx("training_sessions").where({ id: s.id }).update(values);
      sessionId = s.id;
    } else {
      const [s] = await trx("training_sessions")
        .insert({
          worker_id: input.workerId,
          device_type_id: input.deviceTypeId,
          trainer_id: input.trainerId ?? null,
          scheduled_start: at.slice(0, 19), // wall-clock, stored without zone
          created_at: at,
          ...values,
        })
        .returning("id");
      sessionId = s.id;
    }
    if (wearTimeBreach)
      await trx("safety_findings").insert({
        worker_id: input.workerId,
        device_type_id: input.deviceTypeId,
        session_id: sessionId,
        kind: "wear_time_breach",
        detail: `Session of ${minutes} minutes, over the wear-time limit of ${limit} minutes${course.wear_time_limit_minutes != null && Number(course.wear_time_limit_minutes) === limit ? " set for this worker" : " of this device type"}.`,
        recorded_by: input.loggedBy,
        raised_at: at,
      });
    await trx("device_courses")
      .where({ id: course.id })
      .update({
        status: "training",
        cumulative_hours: cumulativeHours,
        started_on: course.started_on ?? day,
        updated_at: at,
      });
    let stage: Stage = worker.stage;
    const setStage = async (to: Stage) => {
      if (stage === to) return;
      await trx("workers").where({ id: input.workerId }).update({ stage: to, updated_at: at });
      await trx("stage_changes").insert({
        worker_id: input.workerId,
        device_type_id: input.deviceTypeId,
        from_stage: stage,
        to_stage: to,
        actor_user_id: input.loggedBy,
        at,
      });
      stage = to;
    };
    if (["invited", "consented", "baselined", "forecast", "planned"].includes(stage)) await setStage("training");

    const criterion = await getCriterion(input.deviceTypeId, trx);
    let proficient = false;
    if (criterion) {
      const sessions = await loggedSessions(trx, input.workerId, input.deviceTypeId);
      const hit = firstProficientIndex(
        sessions.map((s) => s.score),
        criterion,
      );
      if (hit >= 0) {
        proficient = true;
        const hours = sessions[hit].cumulativeHours;
        await trx("device_courses")
          .where({ id: course.id })
          .update({ status: "proficient", proficient_on: day, hours_to_proficiency: hours, updated_at: at });
        await setStage("proficient");
        // Sessions still scheduled on this device could never be logged now: they leave the trainer's day.
        await trx("training_sessions")
          .where({ worker_id: input.workerId, device_type_id: input.deviceTypeId, status: "scheduled" })
          .whereNot("id", sessionId)
          .update({ status: "cancelled", notes: "Cancelled: proficiency reached." });
        await recordOutcome(trx, input.workerId, input.deviceTypeId, hours, day, at);
      }
    }
    const forecast = await upsertForecast(trx, input.workerId, input.deviceTypeId, { actor: input.loggedBy, now: at });
    return { sessionId, cumulativeHours, proficient, proficientOn: proficient ? day : null, forecast, wearTimeBreach };
  };
  return k ? run(k) : db().transaction(run);
}

/** The trainer record of a user, if they are a trainer. */
/**
 * A trainer without a wider progress right reaches only the trainees on their own schedule (the caller
 * checks that); everyone else is held to their scope.
 */
export function reachesOnlyOwnTrainees(p: Principal): boolean {
  return can(p, "sessions.own") && !can(p, "progress.all");
}

export async function trainerIdFor(userId: number, k: Db = db()): Promise<number | null> {
  const t = await k("trainers").where({ user_id: userId }).first("id");
  return t?.id ?? null;
}

/** Whether a trainer has this worker on their schedule for this device type. */
export async function trainerHasTrainee(
  trainerId: number,
  workerId: number,
  deviceTypeId: number,
  k: Db = db(),
): Promise<boolean> {
  return Boolean(
    await k("training_sessions")
      .where({ trainer_id: trainerId, worker_id: workerId, device_type_id: deviceTypeId })
      .first("id"),
  );
}

/** The trainer's next session still to do with this trainee on this device (the one place a session is logged). */
export async function nextSessionWithTrainee(
  trainerId: number,
  workerId: number,
  deviceTypeId: number,
  k: Db = db(),
): Promise<number | null> {
  const s = await k("training_sessions")
    .where({ trainer_id: trainerId, worker_id: workerId, device_type_id: deviceTypeId, status: "scheduled" })
    .orderBy([{ column: "scheduled_start" }, { column: "id" }])
    .first("id");
  return s?.id ?? null;
}

export interface ProgressView {
  worker: { id: number; employeeNumber: string; name: string; stage: string };
  deviceType: { id: number; code: string; name: string; wearTimeLimitMinutes: number };
  criterion: { scoreThreshold: number; consecutiveSessions: number } | null;
  planningConsent: boolean;
  course: {
    status: string;
    cumulativeHours: number;
    startedOn: string | null;
    proficientOn: string | null;
    hoursToProficiency: number | null;
  } | null;
  sessions: {
    id: number;
    at: string;
    durationHours: number;
    score: number;
    cumulativeHours: number;
    notes: string | null;
  }[];
  forecast: {
    modelVersion: number;
    medianHours: number;
    lowerHours: number;
    upperHours: number;
    planningHours: number;
    planningQuantile: number;
    status: string | null;
    remainingHours: number | null;
    remainingLower: number | null;
    remainingUpper: number | null;
    remainingPlanningHours: number | null;
    curveWeight: number | null;
    reason: string | null;
    curve: { kind: CurveKind; asymptote: number; start: number; rate: number; converged: boolean } | null;
    /** Which progress curve was used and why (AICc of each candidate); null for forecasts stored before. */
    curveChoice: ProgressUpdate["curveChoice"];
    simulation: ProgressUpdate["simulation"];
    crossing: { hours: number; lower: number; upper: number } | null;
  } | null;
  curvePoints: { hours: number; score: number }[];
  reviewFlags: { kind: string; reason: string; raisedAt: string }[];
  /** Why there is no forecast (null when there is one). */
  noForecast: string | null;
  /** Sessions the worker did not come to, counted by reason (as recorded by the trainer). */
  noShows: { total: number; byReason: { reason: string; count: number }[] };
  /** The latest assessor decision on a pause of this course (status only, no clinical note). */
  review: Awaited<ReturnType<typeof courseReviewStatus>>;
  showNotes: boolean;
}

/**
 * Progress of a worker on a device type. Assessors and coordinators: workers in scope. Trainers: only
 * trainees on their own schedule (checked by the caller with trainerHasTrainee). Returns null when absent.
 */
export async function progressView(
  p: Principal,
  workerId: number,
  deviceTypeId: number,
  k: Db = db(),
): Promise<ProgressView | null> {
  const worker = await workerInScope(
    reachesOnlyOwnTrainees(p) ? { allSites: true, siteIds: [], departmentIds: [] } : p.scope,
    workerId,
    k,
  );
  if (!worker) return null;
  const d = await k("device_types").where({ id: deviceTypeId }).first("id", "code", "name", "wear_time_limit_minutes");
  if (!d) return null;
  const course = await k("device_courses").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
  const sessions = await loggedSessions(k, workerId, deviceTypeId);
  const f = await k("forecasts as f")
    .join("model_versions as v", "v.id", "f.model_version_id")
    .where({ "f.worker_id": workerId, "f.device_type_id": deviceTypeId })
    .first("f.*", "v.version_number");
  const pj = f?.progress ? JSON.parse(f.progress) : null;
  const criterion = await getCriterion(deviceTypeId, k);
  const flags = await k("review_flags")
    .where({ worker_id: workerId, device_type_id: deviceTypeId })
    .whereNull("resolved_at")
    .select("kind", "reason", "raised_at");
  const lastHours = sessions.length ? sessions[sessions.length - 1].cumulativeHours : 0;
  const toHours = Math.max(lastHours, pj?.crossing?.upper ?? 0, f ? Number(f.upper_hours) : 0, 1) * 1.05;
  const showNotes = can(p, "progress.notes");
  return {
    worker: { id: worker.id, employeeNumber: worker.employeeNumber, name: worker.name, stage: worker.stage },
    deviceType: {
      id: d.id,
      code: d.code,
      name: d.name,
      wearTimeLimitMinutes: effectiveWearLimit(Number(d.wear_time_limit_minutes), course?.wear_time_limit_minutes),
    },
    criterion,
    planningConsent: (await latestConsent(k, [workerId], "planning")).get(workerId) === "given",
    course: course
      ? {
          status: course.status,
          cumulativeHours: Number(course.cumulative_hours),
          startedOn: course.started_on ? course.started_on : null,
          proficientOn: course.proficient_on ? course.proficient_on : null,
          hoursToProficiency: course.hours_to_proficiency == null ? null : Number(course.hours_to_proficiency),
        }
      : null,
    sessions: sessions.map((s) => ({
      id: s.id,
      at: s.at,
      durationHours: s.durationHours,
      score: s.score,
      cumulativeHours: s.cumulativeHours,
      notes: showNotes ? s.notes : null,
    })),
    forecast: f
      ? {
          modelVersion: f.version_number,
          medianHours: Number(f.median_hours),
          lowerHours: Number(f.lower_hours),
          upperHours: Number(f.upper_hours),
          planningHours: Number(f.planning_hours),
          planningQuantile: Number(f.planning_quantile),
          status: f.progress_status ?? null,
          remainingHours: f.remaining_hours == null ? null : Number(f.remaining_hours),
          remainingLower: f.remaining_lower == null ? null : Number(f.remaining_lower),
          remainingUpper: f.remaining_upper == null ? null : Number(f.remaining_upper),
          remainingPlanningHours: f.remaining_planning_hours == null ? null : Number(f.remaining_planning_hours),
          curveWeight: pj?.curveWeight ?? null,
          reason: pj?.reason ?? null,
          curve: pj?.curve ? { kind: "exponential", ...pj.curve } : null,
          curveChoice: pj?.curveChoice ?? null,
          simulation: pj?.simulation ?? null,
          crossing: pj?.crossing ?? null,
        }
      : null,
    curvePoints: pj?.curve?.converged ? curvePoints(pj.curve, toHours) : [],
    reviewFlags: flags.map((r) => ({ kind: r.kind, reason: r.reason, raisedAt: String(r.raised_at) })),
    noForecast: f ? null : gapText(await forecastGap(k, workerId, deviceTypeId)),
    noShows: await noShowCounts(k, workerId, deviceTypeId),
    review: await courseReviewStatus(workerId, deviceTypeId, k),
    showNotes,
  };
}

/** No-shows of a worker on a device type, counted per reason in the order first seen (reasons in words). */
async function noShowCounts(k: Db, workerId: number, deviceTypeId: number): Promise<ProgressView["noShows"]> {
  const rows = await k("training_sessions")
    .where({ worker_id: workerId, device_type_id: deviceTypeId, status: "no_show" })
    .orderBy([{ column: "scheduled_start" }, { column: "id" }])
    .select("no_show_reason", "no_show_note");
  const counts = new Map<string, number>();
  for (const r of rows) {
    const text = noShowText(r.no_show_reason, r.no_show_note);
    counts.set(text, (counts.get(text) ?? 0) + 1);
  }
  return { total: rows.length, byReason: [...counts].map(([reason, count]) => ({ reason, count })) };
}

/** Courses with logged sessions for workers in scope (for the progress index). */
export async function listCoursesInScope(p: Principal, k: Db = db()) {
  const q = k("device_courses as c")
    .join("workers", "workers.id", "c.worker_id")
    .join("device_types as d", "d.id", "c.device_type_id")
    .leftJoin("forecasts as f", function () {
      this.on("f.worker_id", "c.worker_id").andOn("f.device_type_id", "c.device_type_id");
    })
    .whereIn("c.status", ["training", "paused", "proficient"])
    .select(
      "c.worker_id",
      "c.device_type_id",
      "c.status",
      "c.cumulative_hours",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "d.name as device_name",
      "f.remaining_hours",
      "f.progress_status",
    )
    .orderBy([{ column: "c.status", order: "desc" }, { column: "workers.employee_number" }])
    .limit(300);
  if (reachesOnlyOwnTrainees(p)) {
    const tid = p.kind === "user" ? await trainerIdFor(p.user.id, k) : null;
    q.whereExists((e) =>
      e
        .select(k.raw("1"))
        .from("training_sessions as ts")
        .whereRaw("ts.worker_id = c.worker_id and ts.device_type_id = c.device_type_id")
        .where("ts.trainer_id", tid ?? -1),
    );
  } else {
    whereWorkerInScope(q, p.scope);
  }
  return (await q).map((r) => ({
    workerId: r.worker_id as number,
    deviceTypeId: r.device_type_id as number,
    status: r.status as string,
    cumulativeHours: Number(r.cumulative_hours),
    employeeNumber: r.employee_number as string,
    name: `${r.given_name} ${r.family_name}`,
    deviceType: r.device_name as string,
    remainingHours: r.remaining_hours == null ? null : Number(r.remaining_hours),
    progressStatus: (r.progress_status as string) ?? null,
  }));
}

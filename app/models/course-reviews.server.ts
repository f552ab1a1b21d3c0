import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { appUrl } from "~/config.server";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { conflict, UserError } from "~/errors";
import { sendMail } from "~/mail.server";
import {
  COURSE_DECISION_LABELS,
  COURSE_DECISIONS,
  type CourseDecision,
  type CourseDecisionInput,
  type ReviewKind,
} from "~/schemas/course-review";

export { reviewPath } from "~/schemas/course-review";

import { ADVERSE_LABELS } from "~/schemas/session-log";
import { roleEmailsCovering } from "./adverse-events.server";
import { setStage } from "./consent.server";
import { upsertForecast, workerInScope } from "./forecast.server";
import { lockWorker } from "./locks.server";

// The assessor's review of a paused course (a severe adverse event paused it, adverse-events.server.ts):
// the events, the session log and the safety findings in one view, and the decision — resume, resume with
// conditions (a lower wear-time limit for this worker on this device type, other conditions in words) or
// stop this device type — recorded with who and when in course_reviews, in one transaction. On resume the
// sessions still scheduled for the course are cancelled and the course goes back to `planned`, so the
// worker is in the next allocation run's pool (allocation-problem.server.ts) under the new limit.

/** The wear-time limit in force for one worker on one device type: the course's own limit when stricter. */
export function effectiveWearLimit(deviceLimit: number, courseLimit: number | null | undefined): number {
  return courseLimit != null && courseLimit < deviceLimit ? courseLimit : deviceLimit;
}

export interface CourseDecisionRow {
  id: number;
  decision: ReviewKind;
  wearTimeLimitMinutes: number | null;
  conditions: string | null;
  clinicalNote: string;
  decidedBy: string | null;
  decidedAt: string;
}

export interface SafetyFinding {
  id: number;
  sessionId: number | null;
  kind: "wear_time_breach";
  detail: string;
  raisedAt: string;
  closedByReview: number | null;
}

async function decisions(k: Db, workerId: number, deviceTypeId: number): Promise<CourseDecisionRow[]> {
  const rows = await k("course_reviews as r")
    .leftJoin("users as u", "u.id", "r.decided_by")
    .where({ "r.worker_id": workerId, "r.device_type_id": deviceTypeId })
    .select("r.*", "u.display_name")
    .orderBy([
      { column: "r.decided_at", order: "desc" },
      { column: "r.id", order: "desc" },
    ]);
  return rows.map((r) => ({
    id: r.id,
    decision: r.decision,
    wearTimeLimitMinutes: r.wear_time_limit_minutes == null ? null : Number(r.wear_time_limit_minutes),
    conditions: r.conditions ?? null,
    clinicalNote: r.clinical_note,
    decidedBy: r.display_name ?? null,
    decidedAt: String(r.decided_at),
  }));
}

/** Safety findings of one course, newest first (open ones are those no decision has closed yet). */
export async function findingsForCourse(k: Db, workerId: number, deviceTypeId: number): Promise<SafetyFinding[]> {
  const rows = await k("safety_findings")
    .where({ worker_id: workerId, device_type_id: deviceTypeId })
    .select("id", "session_id", "kind", "detail", "raised_at", "review_id")
    .orderBy([
      { column: "raised_at", order: "desc" },
      { column: "id", order: "desc" },
    ]);
  return rows.map((r) => ({
    id: r.id,
    sessionId: r.session_id ?? null,
    kind: r.kind,
    detail: r.detail,
    raisedAt: String(r.raised_at),
    closedByReview: r.review_id ?? null,
  }));
}

/** Open safety findings and paused courses of one worker (for the worker record's list of courses to review). */
export async function coursesNeedingReview(workerId: number, k: Db = db()) {
  const rows = await k("device_courses as c")
    .join("device_types as d", "d.id", "c.device_type_id")
    .where("c.worker_id", workerId)
    .where((q) =>
      q
        .where("c.status", "paused")
        .orWhereExists((e) =>
          e
            .select(k.raw("1"))
            .from("safety_findings as f")
            .whereRaw("f.worker_id = c.worker_id and f.device_type_id = c.device_type_id")
            .whereNull("f.review_id"),
        ),
    )
    .select("c.device_type_id", "d.name", "c.status", "c.pause_reason")
    .orderBy(["d.name", "c.id"]);
  return rows.map((r) => ({
    deviceTypeId: r.device_type_id as number,
    deviceType: r.name as string,
    status: r.status as string,
    pauseReason: (r.pause_reason as string) ?? null,
  }));
}

/** The latest decision on a course, for the trainer's and the progress pages (status only, no clinical note). */
export async function courseReviewStatus(workerId: number, deviceTypeId: number, k: Db = db()) {
  const r = await k("course_reviews")
    .where({ worker_id: workerId, device_type_id: deviceTypeId })
    .whereIn("decision", COURSE_DECISIONS)
    .orderBy([
      { column: "decided_at", order: "desc" },
      { column: "id", order: "desc" },
    ])
    .first("decision", "wear_time_limit_minutes", "conditions", "decided_at");
  return r
    ? {
        decision: r.decision as CourseDecision,
        label: COURSE_DECISION_LABELS[r.decision as CourseDecision],
        wearTimeLimitMinutes: r.wear_time_limit_minutes == null ? null : Number(r.wear_time_limit_minutes),
        conditions: r.conditions,
        decidedAt: r.decided_at,
      }
    : null;
}

/** Everything an assessor needs to decide on one worker's course on one device type; null when out of scope. */
export async function courseReview(scope: Scope, workerId: number, deviceTypeId: number, k: Db = db()) {
  const worker = await workerInScope(scope, workerId, k);
  if (!worker) return null;
  const device = await k("device_types").where({ id: deviceTypeId }).first("id", "name", "wear_time_limit_minutes");
  const course = await k("device_courses").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
  if (!device || !course) return null;
  const sessions = await k("training_sessions as s")
    .leftJoin("users as u", "u.id", "s.logged_by")
    .where({ "s.worker_id": workerId, "s.device_type_id": deviceTypeId })
    .whereIn("s.status", ["attended", "no_show"])
    .select(
      "s.id",
      "s.status",
      "s.scheduled_start",
      "s.logged_at",
      "s.duration_hours",
      "s.task_score",
      "s.cumulative_hours",
      "s.notes",
      "u.display_name as logged_by",
    )
    .orderBy([{ column: "s.logged_at" }, { column: "s.id" }]);
  const events = await k("adverse_events")
    .whereIn(
      "session_id",
      sessions.map((s) => s.id as number),
    )
    .select("id", "session_id", "kind", "severity", "notes", "at")
    .orderBy(["at", "id"]);
  const deviceLimit = Number(device.wear_time_limit_minutes);
  const courseLimit = course.wear_time_limit_minutes == null ? null : Number(course.wear_time_limit_minutes);
  return {
    worker,
    deviceType: { id: device.id, name: device.name, wearTimeLimitMinutes: deviceLimit },
    course: {
      status: course.status,
      pauseReason: course.pause_reason,
      cumulativeHours: Number(course.cumulative_hours),
      wearTimeLimitMinutes: courseLimit,
      effectiveWearTimeLimitMinutes: effectiveWearLimit(deviceLimit, courseLimit),
    },
    sessions: sessions.map((s) => ({
      id: s.id as number,
      status: s.status as string,
      at: String(s.logged_at ?? s.scheduled_start ?? ""),
      minutes: s.duration_hours == null ? null : Math.round(Number(s.duration_hours) * 60),
      taskScore: s.task_score == null ? null : Number(s.task_score),
      cumulativeHours: s.cumulative_hours == null ? null : Number(s.cumulative_hours),
      notes: (s.notes as string) ?? null,
      loggedBy: (s.logged_by as string) ?? null,
    })),
    events: events.map((e) => ({
      id: e.id,
      sessionId: e.session_id,
      kind: e.kind,
      label: ADVERSE_LABELS[e.kind],
      severity: e.severity,
      notes: e.notes,
      at: e.at,
    })),
    findings: await findingsForCourse(k, workerId, deviceTypeId),
    decisions: await decisions(k, workerId, deviceTypeId),
  };
}

/** An assessor reviewed the open safety findings of a course that is not paused: recorded, findings closed. */
export async function acknowledgeFindings(
  p: Principal & { kind: "user" },
  workerId: number,
  deviceTypeId: number,
  clinicalNote: string,
): Promise<number> {
  const at = nowInstant();
  return db().transaction(async (trx) => {
    if (!(await workerInScope(p.scope, workerId, trx)))
      throw new UserError("No such worker at your sites.", { status: 404 });
    await lockWorker(trx, workerId);
    const course = await trx("device_courses")
      .where({ worker_id: workerId, device_type_id: deviceTypeId })
      .first("status");
    if (course?.status === "paused")
      throw conflict("This course is paused: decide on it with the decision form; that closes its findings too.");
    const open = trx("safety_findings")
      .where({ worker_id: workerId, device_type_id: deviceTypeId })
      .whereNull("review_id");
    if (!(await open.clone().first("id"))) throw conflict("There is no open safety finding on this course.");
    const [review] = await trx("course_reviews")
      .insert({
        worker_id: workerId,
        device_type_id: deviceTypeId,
        decision: "acknowledge",
        clinical_note: clinicalNote,
        decided_by: p.user.id,
        decided_at: at,
      })
      .returning("id");
    return Number(await open.update({ review_id: typeof review === "object" ? review.id : review }));
  });
}

export interface DecisionOutcome {
  decision: CourseDecision;
  wearTimeLimitMinutes: number | null;
  cancelledSessions: number;
  notified: { worker: string[]; coordinators: string[] };
}

/**
 * Records an assessor's decision on a paused course — one transaction: the review row, the course, the
 * worker's stage, the sessions still scheduled, the open findings and the forecast — then e-mails the worker
 * and the coordinators covering the worker.
 */
export async function decideCourse(
  p: Principal & { kind: "user" },
  workerId: number,
  deviceTypeId: number,
  v: CourseDecisionInput,
): Promise<DecisionOutcome> {
  const at = nowInstant();
  const done = await db().transaction(async (trx) => {
    if (!(await workerInScope(p.scope, workerId, trx)))
      throw new UserError("No such worker at your sites.", { status: 404 });
    await lockWorker(trx, workerId);
    const course = await trx("device_courses").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
    if (!course) throw new UserError("This worker has no course on that device type.", { status: 404 });
    if (course.status !== "paused")
      throw conflict(
        `This course is not paused (it is ${course.status}); it has been decided already. Reload the page to see the decision.`,
      );
    // The course references the device type, so it exists.
    const device = (await trx("device_types").where({ id: deviceTypeId }).first("name", "wear_time_limit_minutes"))!;
    const deviceLimit = Number(device.wear_time_limit_minutes);
    if (v.wearTimeLimitMinutes != null && v.wearTimeLimitMinutes >= deviceLimit)
      throw new UserError(
        `Wear-time limit: must be below the ${device.name}'s own limit of ${deviceLimit} minutes (that applies anyway).`,
        { status: 400, field: "wearTimeLimitMinutes" },
      );
    const [review] = await trx("course_reviews")
      .insert({
        worker_id: workerId,
        device_type_id: deviceTypeId,
        decision: v.decision,
        wear_time_limit_minutes: v.wearTimeLimitMinutes ?? null,
        conditions: v.conditions ?? null,
        clinical_note: v.clinicalNote,
        decided_by: p.user.id,
        decided_at: at,
      })
      .returning("id");
    const reviewId = typeof review === "object" ? review.id : review;
    await trx("safety_findings")
      .where({ worker_id: workerId, device_type_id: deviceTypeId })
      .whereNull("review_id")
      .update({ review_id: reviewId });
    // The plan made before the pause no longer holds (and may be longer than a new limit): its sessions still
    // scheduled are cancelled, and a resumed worker is planned afresh by the next allocation run.
    const cancelled = Number(
      await trx("training_sessions")
        .where({ worker_id: workerId, device_type_id: deviceTypeId, status: "scheduled" })
        .update({ status: "cancelled" }),
    );
    const stop = v.decision === "stop";
    await trx("device_courses")
      .where({ id: course.id })
      .update({
        status: stop ? "stopped" : "planned",
        pause_reason: null,
        wear_time_limit_minutes: v.decision === "resume_with_conditions" ? (v.wearTimeLimitMinutes ?? null) : null,
        updated_at: at,
      });
    if (!stop) await upsertForecast(trx, workerId, deviceTypeId, { actor: p.user.id, now: at });
    else await trx("forecasts").where({ worker_id: workerId, device_type_id: deviceTypeId }).del();
    // The worker's stage leaves `paused` once no course of theirs is paused any more.
    const others = await trx("device_courses").where({ worker_id: workerId }).select("status");
    if (!others.some((c) => c.status === "paused")) {
      const forecast = await trx("forecasts").where({ worker_id: workerId }).first("id");
      const to = others.some((c) => c.status === "training") ? "training" : forecast ? "forecast" : "baselined";
      await setStage(trx, workerId, to, p.user.id, at);
      await trx("stage_changes")
        .where({ worker_id: workerId, from_stage: "paused", at })
        .whereNull("device_type_id")
        .update({ device_type_id: deviceTypeId });
    }
    const w = await trx("workers as w")
      .leftJoin("users as u", "u.id", "w.user_id")
      .where("w.id", workerId)
      .first("w.email", "u.email as user_email", "w.given_name", "w.site_id", "w.department_id");
    const coordinators = await roleEmailsCovering(trx, "coordinator", w.site_id, w.department_id);
    const workerEmail = (w.user_email ?? w.email ?? null) as string | null;
    return { cancelled, device: device.name as string, workerEmail, coordinators, givenName: w.given_name as string };
  });

  const limit = v.decision === "resume_with_conditions" ? (v.wearTimeLimitMinutes ?? null) : null;
  const conditionLines = [
    ...(limit != null ? [`- Wear-time limit for you on the ${done.device}: ${limit} minutes per session.`] : []),
    ...(v.decision === "resume_with_conditions" && v.conditions ? [`- ${v.conditions}`] : []),
  ];
  if (done.workerEmail)
    await sendMail({
      to: done.workerEmail,
      subject:
        v.decision === "stop"
          ? `Your training on the ${done.device} has stopped`
          : `Your training on the ${done.device} can resume`,
      text: [
        `Hello ${done.givenName},`,
        "",
        v.decision === "stop"
          ? `An assessor has reviewed the event during your ${done.device} training and decided that you should not continue training on this device type. Your assessor will talk to you about the reasons and any alternative.`
          : `An assessor has reviewed the event during your ${done.device} training: you may resume. New sessions will be planned for you and appear in your calendar.`,
        ...(conditionLines.length ? ["", "Conditions:", ...conditionLines] : []),
        "",
        `Your record: ${appUrl}/me`,
        "",
        "Stop at once and tell your trainer on pain or numbness.",
      ].join("\n"),
    });
  if (done.coordinators.length)
    await sendMail({
      to: done.coordinators,
      subject:
        v.decision === "stop"
          ? `Training stopped on the ${done.device} after review`
          : `Back from a pause: training on the ${done.device} resumes`,
      text: [
        v.decision === "stop"
          ? `An assessor has stopped a worker's training on the ${done.device} after a paused course was reviewed. ${done.cancelled} scheduled session(s) were cancelled.`
          : `An assessor has resumed a worker's training on the ${done.device} after a pause. ${done.cancelled} scheduled session(s) from the earlier plan were cancelled; the worker is in the next allocation run's pool.`,
        ...(limit != null
          ? ["", `A wear-time limit of ${limit} minutes per session applies to this worker's plan.`]
          : []),
        "",
        `Worker: ${appUrl}/coordinate/trainees/${workerId}`,
      ].join("\n"),
    });
  return {
    decision: v.decision,
    wearTimeLimitMinutes: limit,
    cancelledSessions: done.cancelled,
    notified: { worker: done.workerEmail ? [done.workerEmail] : [], coordinators: done.coordinators },
  };
}

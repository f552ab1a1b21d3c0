import type { Scope } from "~/auth/scope";
import { dayOf, hhmmOfWallClock, type Instant, instantToWallClock, nowDate, type WallClock, wallClock } from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import { effectiveWearLimit } from "./course-reviews.server";
import { whereWorkerInScope } from "./workers.server";

// The schedule: the one reader of training sessions. Scheduled sessions are the published plan — written by
// publishing a run, whether or not they came from one (sessions of workers already in training are carried
// into every run and published again with it). Every page and export that shows sessions calls
// `scheduleSessions`: the coordinator's trainee and trainer pages, the trainer's day, the worker's own page,
// the XLSX export, the worker's calendar file and the API. Times are wall-clock times of the worker's site.

export interface SessionOnSchedule {
  id: number;
  workerId: number;
  employeeNumber: string;
  worker: string;
  department: string;
  site: string;
  /** The worker's site's IANA zone: start and end are its wall-clock times. */
  timeZone: string;
  deviceTypeId: number;
  deviceType: string;
  deviceCode: string;
  wearTimeLimitMinutes: number;
  unit: string | null;
  /** where the session takes place: the unit's site, else the trainer's, else the worker's */
  place: string;
  trainerId: number | null;
  trainer: string | null;
  deviceUnitId: number | null;
  start: WallClock;
  end: WallClock | null;
  status: string;
  /** the published run the session came from; null for sessions carried from before the first run */
  runId: number | null;
  taskScore: number | null;
  durationHours: number | null;
  courseStatus: string | null;
  pauseReason: string | null;
}

export interface ScheduleFilter {
  /** the reader's scope (staff); leave out only for a worker's or trainer's own, already-resolved id */
  scope?: Scope;
  workerId?: number;
  trainerId?: number;
  sessionId?: number;
  /** sessions starting at or after this instant, on the clock of each worker's site (default: now) */
  from?: Instant | Date | null;
  /** wall-clock bounds [from, to) instead of an instant (a trainer's day or week on the site's clock) */
  wallFrom?: WallClock;
  wallTo?: WallClock;
  /** default ["scheduled"]: the schedule; the trainer's day also shows logged ones */
  statuses?: string[];
  limit?: number;
}

/** "Upcoming" means from now: pass `from: null` to read every session regardless of its start. */
export async function scheduleSessions(filter: ScheduleFilter = {}, k: Db = db()): Promise<SessionOnSchedule[]> {
  const q = k("training_sessions as ts")
    .join("workers as w", "w.id", "ts.worker_id")
    .join("sites as ws", "ws.id", "w.site_id")
    .join("departments as dep", "dep.id", "w.department_id")
    .join("device_types as d", "d.id", "ts.device_type_id")
    .leftJoin("device_units as u", "u.id", "ts.device_unit_id")
    .leftJoin("sites as us", "us.id", "u.site_id")
    .leftJoin("trainers as tr", "tr.id", "ts.trainer_id")
    .leftJoin("users as tu", "tu.id", "tr.user_id")
    .leftJoin("sites as trs", "trs.id", "tr.site_id")
    .leftJoin("device_courses as c", function () {
      this.on("c.worker_id", "ts.worker_id").andOn("c.device_type_id", "ts.device_type_id");
    })
    .whereNotNull("ts.scheduled_start")
    .whereIn("ts.status", filter.statuses ?? ["scheduled"])
    .select(
      "ts.id",
      "ts.worker_id",
      "ts.scheduled_start",
      "ts.scheduled_end",
      "ts.status",
      "ts.allocation_run_id",
      "ts.task_score",
      "ts.duration_hours",
      "ts.trainer_id",
      "ts.device_unit_id",
      "w.employee_number",
      "w.given_name",
      "w.family_name",
      "ws.name as worker_site",
      "ws.time_zone",
      "dep.name as department",
      "d.id as device_type_id",
      "d.name as device_name",
      "d.code as device_code",
      "d.wear_time_limit_minutes",
      "u.serial",
      "us.name as unit_site",
      "trs.name as trainer_site",
      "tu.display_name as trainer",
      "c.status as course_status",
      "c.pause_reason",
      "c.wear_time_limit_minutes as own_wear_limit",
    )
    .orderBy([
      { column: "ts.scheduled_start" },
      { column: "tu.display_name" },
      { column: "w.employee_number" },
      { column: "ts.id" },
    ]);
  if (filter.scope) whereWorkerInScope(q, filter.scope, "w");
  if (filter.workerId != null) q.where("ts.worker_id", filter.workerId);
  if (filter.trainerId != null) q.where("ts.trainer_id", filter.trainerId);
  if (filter.sessionId != null) q.where("ts.id", filter.sessionId);
  if (filter.wallFrom) q.where("ts.scheduled_start", ">=", filter.wallFrom);
  if (filter.wallTo) q.where("ts.scheduled_start", "<", filter.wallTo);
  const from = filter.from === undefined && !filter.wallFrom && filter.sessionId == null ? nowDate() : filter.from;
  // Coarse cut in SQL (no zone is more than 14 hours ahead of UTC), exact cut per site's clock below.
  if (from)
    q.where("ts.scheduled_start", ">=", instantToWallClock(new Date(new Date(from).getTime() - 15 * 3_600_000), "UTC"));
  const rows = (await q).map(toSession);
  const upcoming = from ? rows.filter((s) => s.start >= instantToWallClock(from, s.timeZone)) : rows;
  return filter.limit ? upcoming.slice(0, filter.limit) : upcoming;
}

function toSession(r: Row): SessionOnSchedule {
  return {
    id: r.id,
    workerId: r.worker_id,
    employeeNumber: r.employee_number,
    worker: `${r.given_name} ${r.family_name}`,
    department: r.department,
    site: r.worker_site,
    timeZone: r.time_zone,
    deviceTypeId: r.device_type_id,
    deviceType: r.device_name,
    deviceCode: r.device_code,
    // the worker's own stricter limit on this device type, where an assessor set one
    wearTimeLimitMinutes: effectiveWearLimit(Number(r.wear_time_limit_minutes), r.own_wear_limit),
    unit: r.serial ?? null,
    place: r.unit_site ?? r.trainer_site ?? r.worker_site,
    trainerId: r.trainer_id ?? null,
    trainer: r.trainer ?? null,
    deviceUnitId: r.device_unit_id ?? null,
    start: wallClock(r.scheduled_start),
    end: r.scheduled_end ? wallClock(r.scheduled_end) : null,
    status: r.status,
    runId: r.allocation_run_id ?? null,
    taskScore: r.task_score == null ? null : Number(r.task_score),
    durationHours: r.duration_hours == null ? null : Number(r.duration_hours),
    courseStatus: r.course_status ?? null,
    pauseReason: r.pause_reason ?? null,
  };
}

/** One row of the coordinator's schedule view and the XLSX export. */
export interface ScheduleRow {
  id: number;
  workerId: number;
  date: string;
  start: string;
  end: string;
  employeeNumber: string;
  worker: string;
  department: string;
  site: string;
  /** The site's IANA zone: date, start and end are its wall-clock times. */
  timeZone: string;
  deviceType: string;
  unit: string | null;
  trainer: string | null;
  runId: number | null;
}

/** The upcoming published schedule of the workers in the reader's scope. */
export async function publishedSchedule(scope: Scope, limit = 20_000): Promise<ScheduleRow[]> {
  return (await scheduleSessions({ scope, limit })).map((s) => ({
    id: s.id,
    workerId: s.workerId,
    date: dayOf(s.start),
    start: hhmmOfWallClock(s.start),
    end: s.end ? hhmmOfWallClock(s.end) : "",
    employeeNumber: s.employeeNumber,
    worker: s.worker,
    department: s.department,
    site: s.site,
    timeZone: s.timeZone,
    deviceType: s.deviceType,
    unit: s.unit,
    trainer: s.trainer,
    runId: s.runId,
  }));
}

export const SCHEDULE_NOTE =
  "Planned device training (decision support, published by a coordinator). Keep to each device's wear-time limit; check skin and fatigue before and after each session; stop at once on pain or numbness. Fit is checked by a clinician; the manufacturer's instructions and local occupational-safety rules take precedence.";

import type { Scope } from "~/auth/scope";
import { dayOf, hhmmOfWallClock, wallClock } from "~/dates";
import { db } from "~/db.server";
import { whereWorkerInScope } from "./workers.server";

// The published schedule: scheduled sessions that came from a published allocation run, for the
// coordinator's view and the XLSX export. Workers outside the reader's scope are left out.
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
  runId: number;
}

export async function publishedSchedule(scope: Scope, limit = 20_000): Promise<ScheduleRow[]> {
  const q = db()("training_sessions as s")
    .join("workers", "workers.id", "s.worker_id")
    .join("sites as site", "site.id", "workers.site_id")
    .join("departments as d", "d.id", "workers.department_id")
    .join("device_types as t", "t.id", "s.device_type_id")
    .leftJoin("device_units as u", "u.id", "s.device_unit_id")
    .leftJoin("trainers as tr", "tr.id", "s.trainer_id")
    .leftJoin("users as tu", "tu.id", "tr.user_id")
    .whereNotNull("s.allocation_run_id")
    .where("s.status", "scheduled")
    .select(
      "s.id",
      "s.worker_id",
      "s.scheduled_start",
      "s.scheduled_end",
      "s.allocation_run_id",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "site.name as site",
      "site.time_zone",
      "d.name as department",
      "t.name as device",
      "u.serial",
      "tu.display_name as trainer",
    )
    .orderBy([
      { column: "s.scheduled_start" },
      { column: "tu.display_name" },
      { column: "workers.employee_number" },
      { column: "s.id" },
    ])
    .limit(limit);
  whereWorkerInScope(q, scope);
  return (await q).map((r) => {
    const start = wallClock(r.scheduled_start);
    return {
      id: r.id,
      workerId: r.worker_id,
      date: dayOf(start),
      start: hhmmOfWallClock(start),
      end: hhmmOfWallClock(wallClock(r.scheduled_end)),
      employeeNumber: r.employee_number,
      worker: `${r.given_name} ${r.family_name}`,
      department: r.department,
      site: r.site,
      timeZone: r.time_zone,
      deviceType: r.device,
      unit: r.serial ?? null,
      trainer: r.trainer ?? null,
      runId: r.allocation_run_id,
    };
  });
}

export const SCHEDULE_NOTE =
  "Planned device training (decision support, published by a coordinator). Keep to each device's wear-time limit; check skin and fatigue before and after each session; stop at once on pain or numbness. Fit is checked by a clinician; the manufacturer's instructions and local occupational-safety rules take precedence.";

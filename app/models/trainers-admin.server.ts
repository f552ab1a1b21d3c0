import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { dayOf, hhmmOfWallClock, nowInstant, todayIn } from "~/dates";
import { db } from "~/db.server";
import { conflict, notFound } from "~/errors";
import type { TableQuery } from "~/schemas/table-query";
import { paged } from "./paging.server";
import { type SessionOnSchedule, scheduleSessions } from "./schedule.server";
import { WORKER_HEADER, whereWorkerInScope, workersWithPlace } from "./workers.server";

// People on the training side, for coordinators: trainers (certifications per device type,
// weekly working pattern, leave, trainees per session) and trainees' training fields (max hours per week,
// priority with a reason, leave). No health data here: forecast hours are shown on the run pages.

async function trainerInScope(scope: Scope, trainerId: number) {
  const t = await db()("trainers").where({ id: trainerId }).first("id", "site_id");
  if (!t || (!scope.allSites && !scope.siteIds.includes(t.site_id))) throw notFound("No such trainer at your sites.");
  return t;
}

export async function trainerList(scope: Scope) {
  const q = db()("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .join("sites as s", "s.id", "t.site_id")
    .select(
      "t.id",
      "u.display_name",
      "u.email",
      "s.name as site",
      "t.hours_per_week",
      "t.trainees_per_session",
      "t.max_continuous_minutes",
      "t.break_minutes",
    )
    .orderBy("u.display_name");
  if (!scope.allSites) q.whereIn("t.site_id", scope.siteIds.length ? scope.siteIds : [-1]);
  const rows = await q;
  const ids = rows.map((r) => r.id as number).concat(-1);
  const certs = await db()("trainer_certifications as c")
    .join("device_types as d", "d.id", "c.device_type_id")
    .whereIn("c.trainer_id", ids)
    .select("c.trainer_id", "d.id", "d.name");
  const pattern = await db()("trainer_working_pattern")
    .whereIn("trainer_id", ids)
    .select("id", "trainer_id", "weekday", "start_time", "end_time")
    .orderBy(["weekday", "start_time"]);
  const leave = await db()("trainer_leave")
    .whereIn("trainer_id", ids)
    .select("id", "trainer_id", "starts_on", "ends_on", "reason")
    .orderBy("starts_on");
  return rows.map((r) => ({
    id: r.id as number,
    name: r.display_name as string,
    email: r.email as string,
    site: r.site as string,
    hoursPerWeek: Number(r.hours_per_week),
    traineesPerSession: Number(r.trainees_per_session),
    maxContinuousMinutes: Number(r.max_continuous_minutes),
    breakMinutes: Number(r.break_minutes),
    certifications: certs
      .filter((c) => c.trainer_id === r.id)
      .map((c) => ({ id: c.id as number, name: c.name as string })),
    pattern: pattern
      .filter((p) => p.trainer_id === r.id)
      .map((p) => ({
        id: p.id,
        weekday: Number(p.weekday),
        start: p.start_time,
        end: p.end_time,
      })),
    leave: leave
      .filter((l) => l.trainer_id === r.id)
      .map((l) => ({
        id: l.id,
        startsOn: l.starts_on,
        endsOn: l.ends_on,
        reason: l.reason ?? "",
      })),
  }));
}

export async function trainerDetail(scope: Scope, trainerId: number) {
  const t = (await trainerList(scope)).find((x) => x.id === trainerId);
  if (!t) return null;
  const sessions = await scheduleSessions({ scope, trainerId });
  return { ...t, sessions: sessions.map(sessionLine), traineeIds: [...new Set(sessions.map((s) => s.workerId))] };
}

/** A session as one line on the coordinator's pages (wall-clock times of the worker's site). */
function sessionLine(s: SessionOnSchedule) {
  return {
    id: s.id,
    start: `${dayOf(s.start)} ${hhmmOfWallClock(s.start)}`,
    end: s.end ? hhmmOfWallClock(s.end) : "",
    device: s.deviceType,
    unit: s.unit,
    trainer: s.trainer,
    worker: `${s.employeeNumber} · ${s.worker}`,
  };
}

export async function updateTrainer(
  p: Principal,
  trainerId: number,
  v: {
    hoursPerWeek: number;
    traineesPerSession: number;
    maxContinuousMinutes: number;
    breakMinutes: number;
    deviceTypeIds: number[];
  },
) {
  await trainerInScope(p.scope, trainerId);
  await db().transaction(async (trx) => {
    const known = (await trx("device_types").whereIn("id", v.deviceTypeIds.concat(-1)).select("id")).map((d) => d.id);
    if (known.length !== new Set(v.deviceTypeIds).size)
      throw notFound("A chosen device type does not exist.", "deviceTypeIds");
    await trx("trainers").where({ id: trainerId }).update({
      hours_per_week: v.hoursPerWeek,
      trainees_per_session: v.traineesPerSession,
      max_continuous_minutes: v.maxContinuousMinutes,
      break_minutes: v.breakMinutes,
    });
    const had = (await trx("trainer_certifications").where({ trainer_id: trainerId }).select("device_type_id")).map(
      (c) => c.device_type_id,
    );
    const drop = had.filter((d) => !known.includes(d));
    if (drop.length)
      await trx("trainer_certifications").where({ trainer_id: trainerId }).whereIn("device_type_id", drop).del();
    const add = known.filter((d) => !had.includes(d));
    const zone = (
      await trx("trainers as t").join("sites as s", "s.id", "t.site_id").where("t.id", trainerId).first("s.time_zone")
    ).time_zone as string;
    if (add.length)
      await trx("trainer_certifications").insert(
        add.map((d) => ({
          trainer_id: trainerId,
          device_type_id: d,
          certified_on: todayIn(zone),
        })),
      );
  });
}

export async function addPattern(
  p: Principal,
  trainerId: number,
  v: { weekday: number; startTime: string; endTime: string },
) {
  await trainerInScope(p.scope, trainerId);
  await db().transaction(async (trx) => {
    const same = await trx("trainer_working_pattern")
      .where({ trainer_id: trainerId, weekday: v.weekday })
      .select("start_time", "end_time");
    if (same.some((s) => v.startTime < s.end_time && s.start_time < v.endTime))
      throw conflict("This time overlaps another working window on the same weekday.", "startTime");
    await trx("trainer_working_pattern").insert({
      trainer_id: trainerId,
      weekday: v.weekday,
      start_time: v.startTime,
      end_time: v.endTime,
    });
  });
}

export async function removePattern(p: Principal, trainerId: number, id: number) {
  await trainerInScope(p.scope, trainerId);
  await db()("trainer_working_pattern").where({ id, trainer_id: trainerId }).del();
}

export async function addTrainerLeave(
  p: Principal,
  trainerId: number,
  v: { startsOn: string; endsOn: string; reason: string | null },
) {
  await trainerInScope(p.scope, trainerId);
  await db()("trainer_leave").insert({
    trainer_id: trainerId,
    starts_on: v.startsOn,
    ends_on: v.endsOn,
    reason: v.reason,
    created_at: nowInstant(),
  });
}

export async function removeTrainerLeave(p: Principal, trainerId: number, id: number) {
  await trainerInScope(p.scope, trainerId);
  await db()("trainer_leave").where({ id, trainer_id: trainerId }).del();
}

// Trainees' training fields.
export interface TraineeRow {
  workerId: number;
  employeeNumber: string;
  name: string;
  site: string;
  department: string;
  stage: string;
  maxHoursPerWeek: number | null;
  priority: number;
  priorityReason: string | null;
  leaveCount: number;
}

export function traineeTable(scope: Scope, q: TableQuery) {
  const query = workersWithPlace()
    .leftJoin("worker_training_fields as f", "f.worker_id", "workers.id")
    .whereIn("workers.stage", ["forecast", "planned", "training", "consented", "baselined", "paused", "proficient"])
    .select(...WORKER_HEADER, "f.max_hours_per_week", "f.priority", "f.priority_reason")
    .select(db().raw("(select count(*) from worker_leave l where l.worker_id = workers.id) as leave_count"));
  whereWorkerInScope(query, scope);
  if (q.q) {
    const term = `%${q.q.toLowerCase()}%`;
    query.where((w) =>
      w
        .whereRaw("lower(workers.employee_number) like ?", [term])
        .orWhereRaw("lower(workers.given_name || ' ' || workers.family_name) like ?", [term])
        .orWhereRaw("lower(d.name) like ?", [term]),
    );
  }
  return paged(
    query,
    q,
    {
      worker: "workers.employee_number",
      name: "workers.family_name",
      department: "d.name",
      priority: "f.priority",
      stage: "workers.stage",
    },
    "worker",
    "workers.id",
    (r): TraineeRow => ({
      workerId: r.id as number,
      employeeNumber: r.employee_number as string,
      name: `${r.given_name} ${r.family_name}`,
      site: r.site as string,
      department: r.department as string,
      stage: r.stage as string,
      maxHoursPerWeek: r.max_hours_per_week == null ? null : Number(r.max_hours_per_week),
      priority: r.priority == null ? 1 : Number(r.priority),
      priorityReason: (r.priority_reason as string) ?? null,
      leaveCount: Number(r.leave_count ?? 0),
    }),
  );
}

async function workerRow(scope: Scope, workerId: number) {
  const q = workersWithPlace().where("workers.id", workerId).select(WORKER_HEADER);
  return whereWorkerInScope(q, scope).first();
}

export async function traineeDetail(scope: Scope, workerId: number) {
  const w = await workerRow(scope, workerId);
  if (!w) return null;
  const f = await db()("worker_training_fields").where({ worker_id: workerId }).first();
  const leave = await db()("worker_leave")
    .where({ worker_id: workerId })
    .select("id", "starts_on", "ends_on", "reason")
    .orderBy("starts_on");
  const sessions = await scheduleSessions({ scope, workerId });
  return {
    workerId: w.id as number,
    employeeNumber: w.employee_number as string,
    name: `${w.given_name} ${w.family_name}`,
    site: w.site as string,
    department: w.department as string,
    stage: w.stage as string,
    maxHoursPerWeek: f?.max_hours_per_week == null ? null : Number(f.max_hours_per_week),
    priority: f ? Number(f.priority) : 1,
    priorityReason: f?.priority_reason ?? null,
    leave: leave.map((l) => ({
      id: l.id,
      startsOn: l.starts_on,
      endsOn: l.ends_on,
      reason: l.reason ?? "",
    })),
    sessions: sessions.map(sessionLine),
  };
}

export async function saveTrainingFields(
  p: Principal,
  workerId: number,
  v: { maxHoursPerWeek: number | null; priority: number; priorityReason: string | null },
) {
  if (!(await workerRow(p.scope, workerId))) throw notFound("No such worker in your scope.");
  const row = {
    max_hours_per_week: v.maxHoursPerWeek,
    priority: v.priority,
    priority_reason: v.priorityReason,
    updated_by: p.kind === "user" ? p.user.id : null,
    updated_at: nowInstant(),
  };
  await db()("worker_training_fields")
    .insert({ worker_id: workerId, ...row })
    .onConflict("worker_id")
    .merge(row);
}

export async function addWorkerLeave(
  p: Principal,
  workerId: number,
  v: { startsOn: string; endsOn: string; reason: string | null },
) {
  if (!(await workerRow(p.scope, workerId))) throw notFound("No such worker in your scope.");
  await db()("worker_leave").insert({
    worker_id: workerId,
    starts_on: v.startsOn,
    ends_on: v.endsOn,
    reason: v.reason,
    created_at: nowInstant(),
  });
}

export async function removeWorkerLeave(p: Principal, workerId: number, id: number) {
  if (!(await workerRow(p.scope, workerId))) throw notFound("No such worker in your scope.");
  await db()("worker_leave").where({ id, worker_id: workerId }).del();
}

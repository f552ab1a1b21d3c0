import { type PublishedSession, planFromPublished, type ReplanDecision } from "~/compute/replan";
import { dayOf, hhmmOfWallClock, startOfDay, wallClock } from "~/dates";
import type { Db } from "~/db.server";
import type { RunParameters } from "~/schemas/allocation";
import type { ProblemSnapshot } from "./allocation-problem.server";

// A run "from the published plan" (docs/methods.md, "Re-planning"): reads the published sessions the run would
// replace and the priorities they were published with, and lets app/compute/replan.ts decide who may keep
// their sessions. The decision is stored in the snapshot, so the result, the preview and publishing agree.

interface PublishedRow {
  worker_id: number;
  allocation_run_id: number;
  device_type_id: number;
  device_unit_id: number | null;
  trainer_id: number | null;
  scheduled_start: string;
  scheduled_end: string;
  site_id: number;
  given_name: string;
  family_name: string;
  serial: string | null;
  trainer_name: string | null;
}

export async function fromPublishedPlan(
  snapshot: ProblemSnapshot,
  params: RunParameters & { fromPublished: { keepWeight: number } },
  k: Db,
): Promise<ProblemSnapshot & { replan: ReplanDecision }> {
  const { calendar } = snapshot;
  const pool = params.pool;
  const found = await k("training_sessions as ts")
    .join("workers as w", "w.id", "ts.worker_id")
    .where("ts.status", "scheduled")
    .whereNotNull("ts.allocation_run_id")
    .where("ts.scheduled_start", ">=", startOfDay(params.startDate))
    .whereIn("w.site_id", pool.siteIds.length ? pool.siteIds : [-1])
    .modify((q) => {
      if (pool.departmentIds.length) q.whereIn("w.department_id", pool.departmentIds);
    })
    .leftJoin("device_units as u", "u.id", "ts.device_unit_id")
    .leftJoin("trainers as t", "t.id", "ts.trainer_id")
    .leftJoin("users as tu", "tu.id", "t.user_id")
    .select(
      "ts.worker_id",
      "ts.allocation_run_id",
      "ts.device_type_id",
      "ts.device_unit_id",
      "ts.trainer_id",
      "ts.scheduled_start",
      "ts.scheduled_end",
      "w.site_id",
      "w.given_name",
      "w.family_name",
      "u.serial",
      "tu.display_name as trainer_name",
    )
    .orderBy(["ts.worker_id", "ts.scheduled_start", "ts.id"]);
  const rows: PublishedRow[] = found.map((r: Record<string, unknown>) => ({
    worker_id: r.worker_id as number,
    allocation_run_id: r.allocation_run_id as number,
    device_type_id: r.device_type_id as number,
    device_unit_id: (r.device_unit_id as number | null) ?? null,
    trainer_id: (r.trainer_id as number | null) ?? null,
    scheduled_start: r.scheduled_start as string,
    scheduled_end: r.scheduled_end as string,
    site_id: r.site_id as number,
    given_name: r.given_name as string,
    family_name: r.family_name as string,
    serial: (r.serial as string | null) ?? null,
    trainer_name: (r.trainer_name as string | null) ?? null,
  }));
  const inCalendar = new Map(calendar.workers.map((w) => [w.workerId, w]));
  const excluded = new Map(snapshot.excluded.map((e) => [e.workerId, e]));
  const trainerOf = new Map(calendar.trainers.map((t) => [t.trainerId, t.id]));
  const outOfPool = new Map<string, { name: string; reason: string }>();
  const published: PublishedSession[] = [];
  for (const r of rows) {
    const id = String(r.worker_id);
    if (!inCalendar.has(r.worker_id)) {
      outOfPool.set(id, {
        name: `${r.given_name} ${r.family_name}`,
        reason:
          excluded.get(r.worker_id)?.reason ??
          "no planning consent in force any more, or no longer in the pool of this run",
      });
      continue;
    }
    const device = calendar.devices.find((d) => d.deviceTypeId === r.device_type_id && d.siteId === r.site_id);
    const start = wallClock(r.scheduled_start);
    const end = wallClock(r.scheduled_end);
    published.push({
      workerId: id,
      deviceId: device?.id ?? `device type #${r.device_type_id}`,
      trainerId: r.trainer_id == null ? null : (trainerOf.get(r.trainer_id) ?? r.trainer_name ?? `#${r.trainer_id}`),
      unitId: r.device_unit_id ?? null,
      serial: r.serial ?? "(no unit)",
      date: dayOf(start),
      start: hhmmOfWallClock(start),
      end: hhmmOfWallClock(end),
    });
  }
  // the priority each worker had in the run that published their sessions
  const runIds = [...new Set(rows.map((r) => r.allocation_run_id))].sort((a, b) => a - b);
  const publishedPriority = new Map<string, number>();
  for (const runId of runIds) {
    const run = await k("allocation_runs").where({ id: runId }).first("problem");
    const problem: ProblemSnapshot["problem"] | undefined = run?.problem ? JSON.parse(run.problem).problem : undefined;
    const mine = new Set(rows.filter((r) => r.allocation_run_id === runId).map((r) => String(r.worker_id)));
    for (const w of problem?.workers ?? []) if (mine.has(w.id)) publishedPriority.set(w.id, w.priority);
  }
  const { problem, decision } = planFromPublished(
    snapshot.problem,
    calendar,
    published,
    publishedPriority,
    params.fromPublished.keepWeight,
    outOfPool,
    snapshot.commitments ?? [],
  );
  const kept = decision.keepable.length + (decision.committedKept?.length ?? 0);
  return {
    ...snapshot,
    problem,
    notes: [
      ...snapshot.notes,
      `From the published plan: ${kept} ${kept === 1 ? "person" : "people"} may keep their sessions, ${decision.mustMove.length} must move (the reason is listed with each). Moving someone's published sessions counts against the plan as much as ${params.fromPublished.keepWeight} in value — one more person ready with priority ${params.fromPublished.keepWeight}.`,
    ],
    replan: decision,
  };
}

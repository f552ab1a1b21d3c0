import type { Principal } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import { addDays } from "~/compute/plan-calendar";
import { replanOutcome } from "~/compute/replan";
import { round1 } from "~/compute/rounding";
import { getRun, listRuns } from "./allocation-runs.server";
import { placement, planState, publishPreview, publishRefusal } from "./publish.server";

// What the run page shows of one allocation run: the run's head, the solver's result, the per-worker plan of
// the people ready after placing sessions on the calendar, who is not ready and why, capacity use per week,
// what publishing would do, and the other finished runs to compare with.

export interface WorkerPlanRow {
  workerId: string;
  employeeNumber: string;
  name: string;
  department: string;
  deviceType: string;
  trainers: string;
  hoursPerWeek: string;
  totalHours: number;
  hoursNeeded: number;
  completionWeek: number;
  completionDate: string;
  priority: number;
}

export type RunResultView = NonNullable<Awaited<ReturnType<typeof runResultView>>>;

/** The run page's view of run `runId`; null when there is no such run in the principal's scope. */
export async function runResultView(p: Principal & { kind: "user" }, runId: number) {
  const run = Number.isInteger(runId) && runId > 0 ? await getRun(p.scope, runId) : null;
  if (!run) return null;
  const { snapshot: snap, plan, ...head } = run;
  const workerLabel = new Map((snap?.calendar.workers ?? []).map((w) => [w.id, w]));
  const problemWorker = new Map((snap?.problem.workers ?? []).map((w) => [w.id, w]));
  // Ready means every planned hour got a session: the rest are "not ready in this horizon" (with the reason).
  const refusal = run.status === "done" ? publishRefusal(run) : "Only a finished run can be published.";
  const publishView = run.status === "done" && !refusal ? await publishPreview(run) : null;
  const placed = publishView ?? (run.status === "done" ? placement(run) : null);
  const notReady = new Map((placed?.notReady ?? []).map((n) => [n.workerId, n]));
  const rows: WorkerPlanRow[] = (plan?.assignments ?? [])
    .filter((a) => !notReady.has(a.workerId))
    .map((a) => {
      const w = workerLabel.get(a.workerId);
      const byWeek = new Map<number, number>();
      for (const s of a.sessions) byWeek.set(s.week, (byWeek.get(s.week) ?? 0) + s.hours);
      const weeks = [...byWeek.entries()].sort((x, y) => x[0] - y[0]);
      const total = weeks.reduce((s, [, h]) => s + h, 0);
      return {
        workerId: a.workerId,
        employeeNumber: w?.employeeNumber ?? a.workerId,
        name: w?.name ?? a.workerId,
        department: w ? `${w.site} · ${w.department}` : "",
        deviceType: a.deviceTypeId,
        trainers: [...new Set(a.sessions.map((s) => s.trainerId))].join(", "),
        hoursPerWeek: weeks.map(([k, h]) => `W${k + 1}: ${h.toFixed(1)}`).join(" · "),
        totalHours: round1(total),
        hoursNeeded: round1(
          problemWorker.get(a.workerId)?.options.find((o) => o.deviceTypeId === a.deviceTypeId)?.hoursNeeded ?? total,
        ),
        completionWeek: a.completionWeek + 1,
        completionDate: snap ? addDays(snap.calendar.startDate, a.completionWeek * 7 + 4) : "",
        priority: problemWorker.get(a.workerId)?.priority ?? 1,
      };
    });
  const unassigned = [
    ...(placed?.notReady ?? []).map((n) => ({ name: n.name, employeeNumber: n.employeeNumber, reason: n.reason })),
    ...(plan?.unassigned ?? []).map((u) => ({
      name: workerLabel.get(u.workerId)?.name ?? u.workerId,
      employeeNumber: workerLabel.get(u.workerId)?.employeeNumber ?? "",
      reason: u.reason,
    })),
  ];
  const usage = new Map<
    string,
    { kind: string; id: string; points: { week: number; used: number; capacity: number }[] }
  >();
  for (const u of plan?.usage ?? []) {
    const key = `${u.kind}|${u.id}`;
    const resource = usage.get(key) ?? { kind: u.kind, id: u.id, points: [] };
    usage.set(key, resource);
    resource.points.push({ week: u.week, used: u.used, capacity: u.capacity });
  }
  for (const u of usage.values()) u.points.sort((a, b) => a.week - b.week);
  const preview = placed ?? { sessions: [], unplaced: [] };
  const lastWeek = new Map<string, number>();
  for (const s of preview.sessions) lastWeek.set(s.workerId, Math.max(lastWeek.get(s.workerId) ?? 0, s.week));
  const slipped = rows
    .filter((r) => (lastWeek.get(r.workerId) ?? -1) + 1 > r.completionWeek)
    .map((r) => `${r.name}: week ${(lastWeek.get(r.workerId) ?? 0) + 1} instead of ${r.completionWeek}`);
  const others = (await listRuns(p.scope, 30))
    .filter((r) => r.id !== run.id && r.status === "done")
    .map((r) => ({ id: r.id, label: r.label ?? `${r.parameters.startDate}, ${r.parameters.horizonWeeks} weeks` }));
  const state = await planState();
  return {
    run: head,
    result: plan
      ? {
          status: plan.status,
          objective: plan.objective,
          bound: plan.bound,
          gap: plan.gap ?? null,
          message: plan.message ?? null,
          binding: (plan.bindingResources ?? []).map((b) => b.description),
        }
      : null,
    /** a run from the published plan: who keeps their sessions, who moves and why */
    disruption:
      snap?.replan && plan ? { keepWeight: snap.replan.keepWeight, ...replanOutcome(snap.replan, plan) } : null,
    poolSize: snap?.problem.workers.length ?? 0,
    excluded: snap?.excluded ?? [],
    notes: snap?.notes ?? [],
    rows,
    /** The workers whose plan the page shows (their reads are logged). */
    shownWorkerIds: rows.map((r) => Number(r.workerId)).filter(Number.isFinite),
    unassigned,
    usage: [...usage.values()],
    preview: {
      sessions: preview.sessions.length,
      unplaced: preview.unplaced.map((u) => ({
        name: workerLabel.get(u.workerId)?.name ?? u.workerId,
        hours: round1(u.minutes / 60),
        reason: u.reason,
      })),
      slipped,
      plannedBySolver: plan?.assignments.length ?? 0,
      continuing: placed?.continuing ?? { total: 0, finishing: 0 },
      recipients: publishView?.recipients ?? null,
      withoutEmail: publishView?.withoutEmail ?? 0,
      replaces: publishView?.replaces ?? 0,
    },
    planVersion: state.version,
    currentRunId: state.runId,
    refusal,
    canPublish: can(p.user, "allocation.publish"),
    others,
  };
}

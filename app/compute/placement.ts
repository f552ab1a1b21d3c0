// What a run delivers once its weekly hours are placed on the calendar (docs/methods.md, "Ready after
// placement"): the commitments of workers already in training are packed first, then the plan; a worker of the
// plan is ready only when every planned minute got a session. Pure.
import type { AllocationPlan } from "./allocation";
import type { CommittedPlan } from "./commitments";
import { type PackedSession, type PlanCalendar, packSessions, type UnplacedHours } from "./session-packing";

export interface NotReady {
  workerId: string;
  name: string;
  employeeNumber: string;
  hoursUnplaced: number;
  reason: string;
}

export interface Placement {
  sessions: PackedSession[];
  unplaced: UnplacedHours[];
  /** plan workers with every hour placed */
  readyIds: string[];
  notReady: NotReady[];
  /** workers already in training carried into the run, and how many of them finish inside the horizon */
  continuing: { total: number; finishing: number };
}

export function placePlan(calendar: PlanCalendar, commitments: CommittedPlan[], plan: AllocationPlan): Placement {
  const { sessions, unplaced } = packSessions(calendar, [...commitments.map((c) => c.assignment), ...plan.assignments]);
  const lost = new Map<string, UnplacedHours[]>();
  for (const u of unplaced) lost.set(u.workerId, [...(lost.get(u.workerId) ?? []), u]);
  const label = new Map(calendar.workers.map((w) => [w.id, w]));
  const notReady: NotReady[] = plan.assignments
    .filter((a) => lost.has(a.workerId))
    .map((a) => {
      const mine = lost.get(a.workerId)!;
      const w = label.get(a.workerId);
      const hours = Math.round((mine.reduce((m, u) => m + u.minutes, 0) / 60) * 10) / 10;
      return {
        workerId: a.workerId,
        name: w?.name ?? a.workerId,
        employeeNumber: w?.employeeNumber ?? "",
        hoursUnplaced: hours,
        reason: `${hours} h could not be placed on the calendar. ${mine[0].reason}`,
      };
    });
  return {
    sessions,
    unplaced,
    readyIds: plan.assignments.filter((a) => !lost.has(a.workerId)).map((a) => a.workerId),
    notReady,
    continuing: {
      total: commitments.length,
      finishing: commitments.filter((c) => c.hoursLeft === 0 && !lost.has(c.workerId)).length,
    },
  };
}

/** The few numbers the runs list shows, stored with the result when a run finishes. */
export interface RunSummary {
  ready: number;
  pool: number;
  /** the sum of the priorities of the workers ready after placement */
  value: number;
  continuing: number;
}

export function runSummary(
  calendar: PlanCalendar,
  commitments: CommittedPlan[],
  plan: AllocationPlan,
  priorities: Map<string, number>,
  poolSize: number,
): RunSummary {
  const p = placePlan(calendar, commitments, plan);
  return {
    ready: p.readyIds.length,
    pool: poolSize,
    value: Math.round(p.readyIds.reduce((s, id) => s + (priorities.get(id) ?? 1), 0) * 100) / 100,
    continuing: commitments.length,
  };
}

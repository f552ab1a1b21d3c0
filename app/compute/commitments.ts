// Workers already in training are fixed commitments of every new run (docs/methods.md): they keep their device
// type, and their remaining hours are booked first, week by week, before the solver chooses whom else to
// make ready with the capacity that is left. Pure and deterministic.
import type { AllocationAssignment, AllocationProblem } from "./allocation";

export interface Commitment {
  workerId: string;
  /** the problem's device id (device type at the worker's site) */
  deviceTypeId: string;
  hoursNeeded: number;
  maxHoursPerWeek: number;
  /** weeks the worker can train (all when absent) */
  availableWeeks?: number[];
  /** the trainer who has been training them, kept where certified and free */
  preferredTrainerId?: string | null;
}

export interface CommittedPlan {
  workerId: string;
  assignment: AllocationAssignment;
  /** hours booked inside the horizon */
  hoursBooked: number;
  /** hours still to go after the horizon (0: ready inside it, in assignment.completionWeek) */
  hoursLeft: number;
}

const QUARTER = 0.25;
const floorQuarter = (h: number) => Math.floor(h / QUARTER + 1e-9) * QUARTER;
// hours are booked in quarters, so the need is rounded up to one: a remainder under a quarter would never be booked
const ceilQuarter = (h: number) => Math.ceil(h / QUARTER - 1e-9) * QUARTER;
const round2 = (x: number) => Math.round(x * 100) / 100;

/**
 * Books each commitment's remaining hours from week 0 on — as many per week as the worker's weekly maximum,
 * the device type's hours and a certified trainer's hours allow (trainer-hours = supervised hours ÷ trainees
 * per session) — and returns the problem with those hours taken off its capacities.
 */
export function bookCommitments(
  problem: AllocationProblem,
  commitments: Commitment[],
): { problem: AllocationProblem; committed: CommittedPlan[] } {
  const device = new Map(problem.deviceTypes.map((d) => [d.id, [...d.hoursPerWeek]]));
  const trainer = new Map(problem.trainers.map((t) => [t.id, [...t.hoursPerWeek]]));
  const committed: CommittedPlan[] = [];
  const ordered = [...commitments].sort((a, b) => a.workerId.localeCompare(b.workerId, "en", { numeric: true }));
  for (const c of ordered) {
    const cap = device.get(c.deviceTypeId);
    const certified = problem.trainers.filter((t) => t.deviceTypeIds.includes(c.deviceTypeId));
    const need = ceilQuarter(c.hoursNeeded);
    let left = need;
    let completion = problem.weeks - 1;
    const sessions: AllocationAssignment["sessions"] = [];
    for (let w = 0; w < problem.weeks && left > 1e-9 && cap; w++) {
      if (c.availableWeeks && !c.availableWeeks.includes(w)) continue;
      // preferred trainer first, then the one with most hours left this week
      const order = [...certified].sort(
        (a, b) =>
          Number(b.id === c.preferredTrainerId) - Number(a.id === c.preferredTrainerId) ||
          trainer.get(b.id)![w] - trainer.get(a.id)![w] ||
          a.id.localeCompare(b.id),
      );
      let weekLeft = Math.min(c.maxHoursPerWeek, left);
      for (const t of order) {
        const th = trainer.get(t.id)!;
        const h = floorQuarter(Math.min(weekLeft, cap[w], th[w] * t.traineesPerSession));
        if (h <= 0) continue;
        cap[w] = round2(cap[w] - h);
        th[w] = round2(th[w] - h / t.traineesPerSession);
        sessions.push({ week: w, trainerId: t.id, hours: h });
        weekLeft = round2(weekLeft - h);
        left = round2(left - h);
        if (weekLeft <= 0) break;
      }
      if (left <= 1e-9) completion = w;
    }
    const booked = round2(sessions.reduce((s, x) => s + x.hours, 0));
    committed.push({
      workerId: c.workerId,
      assignment: { workerId: c.workerId, deviceTypeId: c.deviceTypeId, completionWeek: completion, sessions },
      hoursBooked: booked,
      hoursLeft: Math.max(0, round2(need - booked)),
    });
  }
  return {
    problem: {
      ...problem,
      deviceTypes: problem.deviceTypes.map((d) => ({ ...d, hoursPerWeek: device.get(d.id)! })),
      trainers: problem.trainers.map((t) => ({ ...t, hoursPerWeek: trainer.get(t.id)! })),
    },
    committed,
  };
}

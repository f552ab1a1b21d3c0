/**
 * Turning a realisable selection into weekly sessions: first pull each chosen worker's finish as early
 * as the others allow (highest priority first, binary search on a deadline week, each step re-checked
 * by the max-flow), then split each device-week's flow among the certified trainers that carry it.
 */

import { type Budget, outOfBudget } from "./heuristics";
import { EPS } from "./instance";
import type { Selection } from "./selection";
import type { AllocationAssignment, AllocationProblem, CapacityUse } from "./types";

export function tightenDeadlines(sel: Selection, budget: Budget): void {
  const { inst, net } = sel;
  const order = sel
    .chosenWorkers()
    .sort(
      (a, b) =>
        inst.workers[b].priority - inst.workers[a].priority ||
        inst.candidates[sel.chosen[a]].hours - inst.candidates[sel.chosen[b]].hours ||
        a - b,
    );
  for (const w of order) {
    if (outOfBudget(sel, budget)) return;
    const c = sel.chosen[w];
    const cand = inst.candidates[c];
    // earliest conceivable finish for this worker alone
    let lo = 0;
    let acc = 0;
    for (let k = 0; k < inst.weeks; k++) {
      acc += cand.weekCap[k];
      if (acc + EPS >= cand.hours) {
        lo = k;
        break;
      }
    }
    let hi = lastWeekOf(net.weeklyHours(c)); // a deadline the current flow already meets
    while (lo < hi) {
      if (outOfBudget(sel, budget)) break;
      const mid = (lo + hi) >> 1;
      net.setScale(c, 1, mid);
      net.augment();
      if (net.shortfall(c) <= EPS * Math.max(1, cand.hours)) hi = mid;
      else {
        lo = mid + 1;
        net.setScale(c, 1, hi);
        net.augment();
      }
    }
  }
}

function lastWeekOf(hours: number[]): number {
  for (let k = hours.length - 1; k >= 0; k--) if (hours[k] > 1e-9) return k;
  return 0;
}

export function extractAssignments(sel: Selection, problem: AllocationProblem): AllocationAssignment[] {
  const { inst, net } = sel;
  const H = inst.weeks;
  // remaining trainer flow per device-week
  const trainerLeft: [number, number][][][] = net.supervisionEdges.map((row) =>
    row.map((list) => list.map(([t, e]) => [t, net.net.flow(e)] as [number, number])),
  );
  const out: AllocationAssignment[] = [];
  for (const w of sel.chosenWorkers()) {
    const c = sel.chosen[w];
    const cand = inst.candidates[c];
    const hours = net.weeklyHours(c);
    const sessions: AllocationAssignment["sessions"] = [];
    for (let k = 0; k < H; k++) {
      let need = hours[k];
      if (need <= 1e-9) continue;
      const pool = trainerLeft[cand.device][k];
      for (const slot of pool) {
        if (need <= 1e-9) break;
        if (slot[1] <= 1e-12) continue;
        const take = Math.min(slot[1], need);
        slot[1] -= take;
        need -= take;
        sessions.push({ week: k, trainerId: inst.trainerIds[slot[0]], hours: take });
      }
      // rounding residue (≤ 1e-9 h) goes to the last trainer used this week
      if (need > 0 && sessions.length && sessions[sessions.length - 1].week === k)
        sessions[sessions.length - 1].hours += need;
    }
    const completionWeek = sessions.length ? sessions[sessions.length - 1].week : 0;
    out.push({ workerId: problem.workers[w].id, deviceTypeId: inst.deviceIds[cand.device], completionWeek, sessions });
  }
  return out;
}

export function capacityUse(sel: Selection, problem: AllocationProblem): CapacityUse[] {
  const { inst, net } = sel;
  const use: CapacityUse[] = [];
  inst.deviceIds.forEach((id, d) => {
    for (let k = 0; k < inst.weeks; k++)
      use.push({
        kind: "device",
        id,
        week: k,
        used: net.net.flow(net.deviceEdge[d][k]),
        capacity: inst.deviceCap[d][k],
      });
  });
  inst.trainerIds.forEach((id, t) => {
    for (let k = 0; k < inst.weeks; k++)
      use.push({
        kind: "trainer",
        id,
        week: k,
        used: net.net.flow(net.trainerEdge[t][k]) / inst.traineesPerSession[t],
        capacity: Math.max(0, problem.trainers[t].hoursPerWeek[k] ?? 0),
      });
  });
  return use;
}

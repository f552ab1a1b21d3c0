/**
 * Primal heuristics on a Selection: fairness-first construction, then greedy filling in a given order,
 * then swaps (drop one chosen worker of lower priority, admit a better one, refill the freed room).
 * Effort is bounded by a deterministic budget of max-flow phases.
 */

import { type Instance, minHours } from "./instance";
import type { Selection } from "./selection";

export interface Budget {
  /** max-flow phases left (Selection.work counts them) */
  limit: number;
  expired?: () => boolean;
}

export const outOfBudget = (sel: Selection, b: Budget) => sel.work >= b.limit || (b.expired?.() ?? false);

/** Options of a worker ordered by hours needed (ascending), then device index. */
export function optionsByHours(inst: Instance, w: number): number[] {
  return [...inst.workers[w].candidates].sort((a, b) => inst.candidates[a].hours - inst.candidates[b].hours || a - b);
}

/** Bring every group up to its minimum, admitting its least demanding workers first. */
export function meetGroupMinimums(sel: Selection, preference: number[]): void {
  const { inst } = sel;
  const rank = new Map(preference.map((w, i) => [w, i] as const));
  inst.groupMinimum.forEach((m, g) => {
    if (sel.groupCount[g] >= m) return;
    const members = inst.groupMembers[g]
      .filter((w) => inst.workers[w].candidates.length > 0 && !sel.isChosen(w))
      .sort((a, b) => minHours(inst, a) - minHours(inst, b) || (rank.get(a) ?? 0) - (rank.get(b) ?? 0));
    for (const w of members) {
      if (sel.groupCount[g] >= m) break;
      sel.tryWorker(w, optionsByHours(inst, w));
    }
  });
}

export function fill(sel: Selection, order: number[], optionOrder: (w: number) => number[], budget: Budget): void {
  for (const w of order) {
    if (outOfBudget(sel, budget)) return;
    if (!sel.isChosen(w)) sel.tryWorker(w, optionOrder(w));
  }
}

/**
 * Swap search: for each worker left out (best first), try dropping one chosen worker of lower priority
 * whose removal keeps the group minimums, admit the left-out one, refill, and keep the change only if
 * the objective rose.
 */
export function improveBySwaps(
  sel: Selection,
  order: number[],
  optionOrder: (w: number) => number[],
  budget: Budget,
  triesPerWorker = 12,
): boolean {
  const { inst } = sel;
  let improved = false;
  let progress = true;
  while (progress && !outOfBudget(sel, budget)) {
    progress = false;
    for (const u of order) {
      if (outOfBudget(sel, budget)) break;
      if (sel.isChosen(u)) continue;
      const pu = inst.workers[u].priority;
      const victims = sel
        .chosenWorkers()
        .filter(
          (v) =>
            inst.workers[v].priority < pu ||
            (inst.workers[v].priority === pu && inst.candidates[sel.chosen[v]].hours > minHours(inst, u)),
        )
        .filter(
          (v) =>
            sel.groupCount[inst.workers[v].group] - 1 >= inst.groupMinimum[inst.workers[v].group] ||
            inst.workers[v].group === inst.workers[u].group,
        )
        .sort(
          (a, b) =>
            inst.workers[a].priority - inst.workers[b].priority ||
            inst.candidates[sel.chosen[b]].hours - inst.candidates[sel.chosen[a]].hours ||
            a - b,
        )
        .slice(0, triesPerWorker);
      for (const v of victims) {
        if (outOfBudget(sel, budget)) break;
        const before = sel.objective;
        const snap = sel.snapshot();
        sel.drop(v);
        if (sel.tryWorker(u, optionOrder(u))) {
          fill(sel, order, optionOrder, budget);
          if (sel.objective > before + 1e-9 && sel.meetsGroupMinimums()) {
            improved = true;
            progress = true;
            break;
          }
        }
        sel.restore(snap);
      }
    }
  }
  return improved;
}

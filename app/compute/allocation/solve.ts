/**
 * Orchestration of one allocation solve: construct, bound, improve, prove (when small), realise.
 */

import { round1 } from "../rounding";
import { bindingResources } from "./binding";
import { branchAndCut, CutPool } from "./branch-and-cut";
import { type Budget, fill, improveBySwaps, meetGroupMinimums, optionsByHours } from "./heuristics";
import { buildInstance, type Instance, minHours } from "./instance";
import { lagrangianBound } from "./lagrangian";
import { capacityUse, extractAssignments, tightenDeadlines } from "./realise";
import { Selection } from "./selection";
import type { AllocationOptions, AllocationPlan, AllocationProblem } from "./types";

/** Edges scanned per millisecond on a modest machine: turns a time limit into a work budget. */
const EDGES_PER_MS = 40_000;
/** Problems up to this many candidates also get the exact branch-and-cut. */
const EXACT_CANDIDATES = 260;

export function solveWithBranchAndCut(problem: AllocationProblem, options: AllocationOptions): AllocationPlan {
  const timeLimitMs = Math.max(100, options.timeLimitMs ?? 30_000);
  const progress = (phase: string, fraction: number) => options.onProgress?.({ phase, fraction });
  const clock = options.clock;
  const deadline = clock ? clock() + timeLimitMs : Infinity;
  const expired = clock ? () => clock() >= deadline : undefined;

  progress("prepare", 0);
  const inst = buildInstance(problem);
  const sel = new Selection(inst);
  const budget: Budget = { limit: timeLimitMs * EDGES_PER_MS * 0.6, expired };
  const workersWithOptions = inst.workers.map((_, i) => i).filter((w) => inst.workers[w].candidates.length > 0);

  // 1. value-density greedy: priority per hour of the cheapest option
  const byDensity = [...workersWithOptions].sort(
    (a, b) =>
      inst.workers[b].priority / minHours(inst, b) - inst.workers[a].priority / minHours(inst, a) ||
      inst.workers[b].priority - inst.workers[a].priority ||
      a - b,
  );
  const hoursFirst = (w: number) => optionsByHours(inst, w);
  meetGroupMinimums(sel, byDensity);
  // the first greedy pass always runs to the end: a full plan is worth more than a punctual one
  fill(sel, byDensity, hoursFirst, { limit: Infinity });
  let best = sel.snapshot();
  let bestValue = sel.meetsGroupMinimums() ? sel.objective : -Infinity;
  const offer = () => {
    if (sel.meetsGroupMinimums() && sel.objective > bestValue + 1e-9) {
      bestValue = sel.objective;
      best = sel.snapshot();
    }
  };
  progress("construct", 0.1);

  // 2. Lagrangian bound and prices
  const lagIterations = Math.max(
    200,
    Math.min(2000, Math.floor(4e7 / Math.max(1, inst.candidates.length * Math.max(1, inst.weeks)))),
  );
  const lag = lagrangianBound(inst, Math.max(0, bestValue), lagIterations);
  progress("bound", 0.25);

  // 3. price-guided greedy: order by value left after paying for the resources used
  const reducedOf = (w: number) => Math.max(...inst.workers[w].candidates.map((c) => lag.reducedValue[c]));
  const byReduced = [...workersWithOptions].sort(
    (a, b) => reducedOf(b) - reducedOf(a) || inst.workers[b].priority - inst.workers[a].priority || a - b,
  );
  const cheapestPriced = (w: number) =>
    [...inst.workers[w].candidates].sort((a, b) => lag.reducedValue[b] - lag.reducedValue[a] || a - b);
  if (!lag.provenInfeasible) {
    sel.restore(new Array(inst.workers.length).fill(-1));
    meetGroupMinimums(sel, byReduced);
    fill(sel, byReduced, cheapestPriced, budget);
    offer();
    // also priority first, least hours first
    sel.restore(new Array(inst.workers.length).fill(-1));
    const byPriority = [...workersWithOptions].sort(
      (a, b) => inst.workers[b].priority - inst.workers[a].priority || minHours(inst, a) - minHours(inst, b) || a - b,
    );
    meetGroupMinimums(sel, byPriority);
    fill(sel, byPriority, hoursFirst, budget);
    offer();
  }
  progress("construct", 0.35);

  // 4. swaps from the best start
  let bound = lag.bound;
  let provenInfeasible = lag.provenInfeasible;
  let exhaustive = false;
  if (!provenInfeasible) {
    sel.restore(best);
    if (bestValue > -Infinity) {
      improveBySwaps(sel, byReduced, cheapestPriced, budget);
      offer();
    }
    progress("improve", 0.55);

    // 5. exact branch-and-cut once reduced-cost fixing has left a small problem
    const fixing = reducedCostFixing(inst, lag, bestValue);
    const freeCandidates = inst.candidates.length - fixing.fix.zero.size - fixing.fix.one.size;
    if (freeCandidates <= EXACT_CANDIDATES && inst.candidates.length > 0) {
      const pool = new CutPool(inst);
      const lpOrder = (z: Map<number, number>) =>
        [...workersWithOptions].sort(
          (a, b) => zOf(z, inst, b) - zOf(z, inst, a) || reducedOf(b) - reducedOf(a) || a - b,
        );
      // a node costs about 0.5 ms at 50 candidates and grows with the square of the LP size
      const msPerNode = 0.5 * Math.max(1, (inst.candidates.length / 50) ** 2);
      const maxNodes = Math.max(50, Math.floor((0.5 * timeLimitMs) / msPerNode));
      const result = branchAndCut(inst, pool, {
        incumbent: () => bestValue,
        maxNodes,
        rootFix: fixing.fix,
        stop: () => expired?.() ?? false,
        onPoint: (z) => {
          sel.restore(new Array(inst.workers.length).fill(-1));
          const order = lpOrder(z);
          for (const w of order) {
            const cs = [...inst.workers[w].candidates].sort((a, b) => (z.get(b) ?? 0) - (z.get(a) ?? 0) || a - b);
            if ((z.get(cs[0]) ?? 0) >= 1 - 1e-6) sel.tryWorker(w, cs);
          }
          meetGroupMinimums(sel, order);
          fill(
            sel,
            order,
            (w) =>
              [...inst.workers[w].candidates].sort(
                (a, b) => (z.get(b) ?? 0) - (z.get(a) ?? 0) || lag.reducedValue[b] - lag.reducedValue[a] || a - b,
              ),
            { limit: Infinity },
          );
          offer();
        },
      });
      if (result.rootInfeasible && !fixing.applied) provenInfeasible = true;
      else if (result.rootInfeasible) {
        // nothing better than the incumbent is left once the fixings hold: it is optimal
        bound = Math.min(bound, bestValue);
        exhaustive = true;
      } else {
        bound = Math.min(bound, result.bound);
        exhaustive = result.complete;
        if (result.complete && bestValue === -Infinity) provenInfeasible = true;
      }
      progress("prove", 0.85);
    }
  }

  if (inst.integralPriorities) bound = Math.floor(bound + 1e-6);
  if (provenInfeasible || bestValue === -Infinity) return infeasiblePlan(problem, inst, provenInfeasible);
  if (exhaustive) bound = Math.min(bound, bestValue);
  bound = Math.max(bound, bestValue);

  // 6. realise: earliest completion, sessions, usage
  sel.restore(best);
  tightenDeadlines(sel, { limit: sel.work + timeLimitMs * EDGES_PER_MS * 0.2, expired });
  progress("realise", 0.95);
  const assignments = extractAssignments(sel, problem);
  const unassigned = inst.workers
    .map((w, i) => ({ w, i }))
    .filter(({ i }) => sel.chosen[i] < 0)
    .map(({ w, i }) => ({
      workerId: w.id,
      reason:
        inst.impossible.get(i) ??
        `not enough device or trainer time left in the horizon for ${optionText(inst, i)} (priority ${w.priority})`,
    }));
  const objective = sel.objective;
  const optimal = objective >= bound - 1e-6;
  const plan: AllocationPlan = {
    status: optimal ? "optimal" : "feasible",
    objective,
    bound,
    gap: bound > 0 ? Math.max(0, (bound - objective) / bound) : 0,
    assignments,
    unassigned,
    bindingResources: bindingResources(inst, lag, sel.chosen),
    ...(inst.candidates.some((c) => c.fixed)
      ? {
          kept: sel
            .chosenWorkers()
            .filter((w) => inst.candidates[sel.chosen[w]].fixed)
            .map((w) => inst.workers[w].id),
        }
      : {}),
    usage: capacityUse(sel, problem),
  };
  progress("done", 1);
  return plan;
}

/**
 * Reduced-cost fixing from the Lagrangian (Fisher 1981, §6): at any multipliers a plan's value is at most
 * the Lagrangian bound less each worker's loss — the best reduced value of that worker minus the reduced
 * value of what the plan gives them (0 for no option). A plan that beats the incumbent (by one, with
 * whole-number priorities) can therefore not contain a choice whose loss alone exceeds the slack
 * bound − that target: such options are fixed out, and a worker whose exclusion alone costs more than the
 * slack is fixed in when one option is left. The search then runs only over what beats the incumbent.
 */
function reducedCostFixing(
  inst: Instance,
  lag: { bound: number; reducedValue: number[] },
  incumbent: number,
): { fix: { one: Set<number>; zero: Set<number> }; applied: boolean } {
  const fix = { one: new Set<number>(), zero: new Set<number>() };
  if (!Number.isFinite(incumbent)) return { fix, applied: false };
  const beat = inst.integralPriorities ? Math.floor(incumbent + 1e-9) + 1 : incumbent;
  const slack = lag.bound - beat + 1e-7;
  for (const w of inst.workers) {
    let top = 0;
    for (const c of w.candidates) top = Math.max(top, lag.reducedValue[c]);
    const left = w.candidates.filter((c) => top - lag.reducedValue[c] <= slack);
    for (const c of w.candidates) if (!left.includes(c)) fix.zero.add(c);
    if (top > slack && left.length === 1) fix.one.add(left[0]);
  }
  return { fix, applied: true };
}

function zOf(z: Map<number, number>, inst: Instance, w: number): number {
  let s = 0;
  for (const c of inst.workers[w].candidates) s += z.get(c) ?? 0;
  return s;
}

function optionText(inst: Instance, w: number): string {
  return inst.workers[w].candidates
    .map((c) => `${round1(inst.candidates[c].hours)} h on ${inst.deviceIds[inst.candidates[c].device]}`)
    .join(" or ");
}

function infeasiblePlan(problem: AllocationProblem, inst: Instance, proven: boolean): AllocationPlan {
  const short = inst.groupIds
    .map((g, i) => ({ g, need: inst.groupMinimum[i], size: inst.groupMembers[i].length }))
    .filter((x) => x.need > 0)
    .map((x) => `${x.g}: ${x.need} of ${x.size}`)
    .join("; ");
  const message = proven
    ? `The minimum share per group cannot be met with the devices, trainers and weeks available (required ready: ${short}).`
    : `No plan meeting the minimum share per group was found within the time limit (required ready: ${short}); it may be impossible.`;
  return {
    status: "infeasible",
    objective: 0,
    bound: proven
      ? 0
      : inst.workers.reduce((s, w) => s + Math.max(0, ...w.candidates.map((c) => inst.candidates[c].value)), 0),
    gap: proven ? 0 : 1,
    assignments: [],
    unassigned: problem.workers.map((w) => ({ workerId: w.id, reason: message })),
    bindingResources: [],
    usage: [],
    message,
  };
}

/**
 * Training allocator (docs/methods.md): who trains on which device type, when, and with which trainer,
 * so that the most valuable set of workers becomes ready inside the planning horizon.
 *
 * Method, in short:
 * 1. Selection is decided against capacity cuts (max-flow min-cut inequalities of the weekly
 * device × trainer network), never against a full time-indexed model — those are too large for
 * a dense-tableau LP solver.
 * 2. Every candidate selection is realised exactly by a max-flow over the weekly network, so a plan
 * is feasible by construction; the flow is then tightened week by week for early completion.
 * 3. The bound is the smaller of a Lagrangian bound (multipliers on device, trainer and fairness rows)
 * and, for small problems, a branch-and-cut over the cut LP; the gap is reported honestly.
 */
import { solveWithBranchAndCut } from "./allocation/solve";
import type { AllocationOptions, AllocationPlan, AllocationProblem } from "./allocation/types";

export type {
  AllocationAssignment,
  AllocationOptions,
  AllocationPlan,
  AllocationProblem,
  AllocationSession,
  BindingResource,
  CapacityUse,
} from "./allocation/types";

export function solveAllocation(problem: AllocationProblem, options?: AllocationOptions): Promise<AllocationPlan> {
  return Promise.resolve(solveWithBranchAndCut(problem, options ?? {}));
}

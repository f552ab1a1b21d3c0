/**
 * Training allocator (DESIGN §3.5): who trains on which device type, when, and with which trainer,
 * so that the most valuable set of workers becomes ready inside the planning horizon.
 *
 * Method, in short:
 *  1. Selection is decided against capacity cuts (max-flow min-cut inequalities of the weekly
 *     device × trainer network), never against a full time-indexed model — those are too large for
 *     a dense-tableau LP solver.
 *  2. Every candidate selection is realised exactly by a max-flow over the weekly network, so a plan
 *     is feasible by construction; the flow is then tightened week by week for early completion.
 *  3. The bound is the smaller of a Lagrangian bound (multipliers on device, trainer and fairness rows)
 *     and, for small problems, a branch-and-cut over the cut LP; the gap is reported honestly.
 */
import { solveWithBranchAndCut } from "./allocation/solve";

export interface AllocationProblem {
  weeks: number;
  deviceTypes: { id: string; hoursPerWeek: number[] }[];
  trainers: { id: string; deviceTypeIds: string[]; hoursPerWeek: number[]; traineesPerSession: number }[];
  workers: {
    id: string;
    group: string;
    priority: number;
    options: { deviceTypeId: string; hoursNeeded: number }[];
    maxHoursPerWeek: number;
    availableWeeks?: number[];
  }[];
  minimumSharePerGroup?: number;
}

export interface AllocationSession {
  week: number;
  trainerId: string;
  hours: number;
}

export interface AllocationAssignment {
  workerId: string;
  deviceTypeId: string;
  completionWeek: number;
  sessions: AllocationSession[];
}

export interface BindingResource {
  kind: "device" | "trainer";
  id: string;
  /** null = the resource over the whole horizon */
  week: number | null;
  /** priority points gained per extra hour of this resource (LP dual estimate) */
  shadowPrice: number;
  description: string;
}

export interface CapacityUse {
  kind: "device" | "trainer";
  id: string;
  week: number;
  /** device: device-hours booked; trainer: trainer-hours spent (supervised hours / traineesPerSession) */
  used: number;
  capacity: number;
}

export interface AllocationPlan {
  status: "optimal" | "feasible" | "infeasible";
  objective: number;
  bound: number;
  assignments: AllocationAssignment[];
  unassigned: { workerId: string; reason: string }[];
  /** relative gap (bound − objective) / bound; 0 when bound is 0 */
  gap?: number;
  bindingResources?: BindingResource[];
  usage?: CapacityUse[];
  /** human-readable note, e.g. why a fairness minimum cannot be met */
  message?: string;
}

export interface AllocationOptions {
  timeLimitMs?: number;
  onProgress?: (p: { phase: string; fraction: number }) => void;
  /**
   * Optional wall clock (ms) supplied by the caller. Without it the solver is fully deterministic and
   * bounds its effort by work counts calibrated to timeLimitMs; with it, it also stops at the deadline.
   */
  clock?: () => number;
}

export function solveAllocation(problem: AllocationProblem, options?: AllocationOptions): Promise<AllocationPlan> {
  return Promise.resolve(solveWithBranchAndCut(problem, options ?? {}));
}

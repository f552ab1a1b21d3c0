/** Public types of the training allocator; `app/compute/allocation.ts` re-exports them. */

export interface AllocationProblem {
  weeks: number;
  deviceTypes: { id: string; hoursPerWeek: number[] }[];
  trainers: { id: string; deviceTypeIds: string[]; hoursPerWeek: number[]; traineesPerSession: number }[];
  workers: {
    id: string;
    group: string;
    priority: number;
    options: {
      deviceTypeId: string;
      hoursNeeded: number;
      /**
       * A fixed weekly schedule (re-planning from a published plan): the option delivers exactly these hours
       * per week, no more, no less; `hoursNeeded` is then their sum.
       */
      weeklyHours?: number[];
      /** value added on top of the worker's priority when this option is chosen (keeping published sessions) */
      bonus?: number;
    }[];
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
  /** workers whose fixed-schedule option (their published sessions) was chosen */
  kept?: string[];
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

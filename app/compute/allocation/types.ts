import type { AllocationProblem } from "../allocation";
export type Problem = AllocationProblem;

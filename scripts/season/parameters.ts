// The season's size and its events, in one place (tests/integration/programme-season.test.ts,
// `npm run simulate:season` and bench/season.ts all run this one season). INVENTED: no real people or data.
export const SEASON = {
  /** PRNG seed of the cohort, its traces and every logged score */
  seed: 20270104,
  /** the first Monday of the season (the server's clock starts here) */
  startMonday: "2027-01-04",
  weeks: 26,
  /** the two sites of the intake (codes of the demo organisation) and the department each hire joins */
  sites: ["NY", "RS"] as const,
  intakeDepartment: { code: "INTAKE27", name: "2027 intake (invented)" },
  /** new hires imported per intake: [season week, how many]; the total is the cohort */
  intakes: [
    [0, 80],
    [3, 40],
  ] as const,
  /**
   * each weekly run plans this many weeks ahead and the next Monday's run replaces the overlap. A run starts
   * only the people it can make ready inside its horizon (and carries those already training): at 1 week
   * nobody new would ever start.
   */
  horizonWeeks: 2,
  planningQuantilePercent: 80,
  /** a share above 0 can make a week's run infeasible; the coordinator then starts it again at 0 */
  fairnessSharePercent: 0,
  /** the week a second model version is fitted (first assessor) and approved (second assessor) */
  modelWeek: 1,
  modelDevice: "EXO-BACK",
  /** severe adverse events, each on the first session logged that week; an assessor resumes the course */
  severeEventWeeks: [4, 9] as const,
  /** one trainer is on leave for these three weeks (inclusive) */
  leaveWeeks: [6, 8] as const,
  /** one device unit is in maintenance for these weeks (inclusive) */
  maintenanceWeeks: [10, 11] as const,
  /** a worker in training withdraws planning consent at the start of each of these weeks */
  withdrawalWeeks: [5, 12, 18] as const,
  /** share of sessions marked as a no-show */
  noShowRate: 0.03,
} as const;

export const cohortSize = (): number => SEASON.intakes.reduce((n, [, k]) => n + k, 0);

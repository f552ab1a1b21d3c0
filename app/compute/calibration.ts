// Calibration and drift of planning figures (docs/methods.md).
//
// A planning figure promises that a share (the target, e.g. 0.80) of trainees reach proficiency within it.
// Whether it keeps that promise is judged on the courses planned with it, using the same censoring as the
// forecast: a course counts as a miss as soon as its hours pass its figure, without waiting for it to
// finish, and a course still below its figure is censored, never dropped.
//
// Coverage estimate. Each course is put on the scale u = hours / planning figure, so that "within the
// figure" is u ≤ 1 for everyone. Finishing is the event; a running course is censored at its hours so far;
// a stopped course is censored where it stopped (default) or counted as a miss (the sensitivity setting).
// The Kaplan–Meier estimate of the share finishing within the figure is 1 − S(1), with Greenwood's
// standard error. Finishing exactly at the figure counts as within it.
//
// Alarm (the decision rule). Only resolved courses enter it:
//   within — finished at hours ≤ its figure;
//   miss   — finished at hours > its figure, or not finished with hours so far ≥ its figure (any further
//            finish would be past the figure), or stopped when stopped courses count as misses.
// With n resolved courses of which x are within, the alarm fires when the one-sided exact binomial test of
// H₀: coverage ≥ target against H₁: coverage < target rejects at level α:
//   p = P(X ≤ x | X ~ Binomial(n, target)) ≤ α,
// which is the same as the one-sided Clopper–Pearson (1934) upper (1 − α) confidence bound for coverage
// being ≤ target. False-alarm rate: at most α at each review when coverage is at least the target.
// Leaving out unresolved courses cannot raise it: those still below their figure only ever resolve early
// as finishes within it, which adds successes, so the count of successes is stochastically at least
// Binomial(n, target) under H₀ and the exact test stays valid (conservative). Reviews repeated on
// overlapping courses each carry this rate; over many reviews the chance of at least one false alarm grows.

import { kaplanMeier } from "./survival";

export interface PlannedCourse {
  planningHours: number; // the planning figure the course was planned with
  hoursSoFar: number; // hours trained so far (for a finished course: at least the hours at the finish)
  finishedAtHours: number | null; // hours when proficiency was reached; null while not reached
  stopped?: boolean; // the course ended without reaching proficiency
}

export interface CalibrationOptions {
  /** How a stopped course below its figure is counted: censored where it stopped (default) or a miss. */
  stoppedAs?: "censored" | "miss";
}

export interface CoverageEstimate {
  /** Kaplan–Meier share finishing within their planning figure; null while no course has been followed that far. */
  coverage: number | null;
  standardError: number | null; // Greenwood
  courses: number;
  within: number; // finished within the figure
  missed: number; // known to miss the figure
  pending: number; // below the figure and not finished
}

export interface CoverageAlarm {
  alarm: boolean;
  target: number;
  alpha: number;
  resolved: number; // n in the test
  within: number; // x in the test
  /** P(X ≤ within | Binomial(resolved, target)); null when no course is resolved. */
  pValue: number | null;
  /** One-sided Clopper–Pearson upper (1 − α) bound for coverage; null when no course is resolved. */
  upperBound: number | null;
  rule: string;
}

type Status = "within" | "miss" | "pending";

function validateCourses(courses: PlannedCourse[]): void {
  if (!Array.isArray(courses)) throw new Error("courses must be a list");
  courses.forEach((c, i) => {
    const row = `course ${i + 1}`;
    if (!(Number.isFinite(c.planningHours) && c.planningHours > 0)) {
      throw new Error(`${row}: planning figure must be a positive number of hours, got ${c.planningHours}`);
    }
    if (!(Number.isFinite(c.hoursSoFar) && c.hoursSoFar >= 0)) {
      throw new Error(`${row}: hours so far must be zero or more, got ${c.hoursSoFar}`);
    }
    if (c.finishedAtHours !== null) {
      if (!(Number.isFinite(c.finishedAtHours) && c.finishedAtHours > 0)) {
        throw new Error(`${row}: hours at proficiency must be a positive number, got ${c.finishedAtHours}`);
      }
      if (c.finishedAtHours > c.hoursSoFar) {
        throw new Error(
          `${row}: reached proficiency at ${c.finishedAtHours} hours but only ${c.hoursSoFar} hours are recorded`,
        );
      }
      if (c.stopped) throw new Error(`${row}: is marked both as finished and as stopped`);
    }
  });
}

function statusOf(c: PlannedCourse, stoppedAs: "censored" | "miss"): Status {
  if (c.finishedAtHours !== null) return c.finishedAtHours <= c.planningHours ? "within" : "miss";
  if (c.hoursSoFar >= c.planningHours) return "miss";
  if (c.stopped && stoppedAs === "miss") return "miss";
  return "pending";
}

function stoppedSetting(options?: CalibrationOptions): "censored" | "miss" {
  const stoppedAs = options?.stoppedAs ?? "censored";
  if (stoppedAs !== "censored" && stoppedAs !== "miss") {
    throw new Error(`stopped courses are counted as "censored" or "miss", got ${String(stoppedAs)}`);
  }
  return stoppedAs;
}

/** Kaplan–Meier estimate of the share of courses finishing within their planning figure. */
export function planningFigureCoverage(courses: PlannedCourse[], options?: CalibrationOptions): CoverageEstimate {
  validateCourses(courses);
  const stoppedAs = stoppedSetting(options);
  const ratio: number[] = [];
  const finished: boolean[] = [];
  let within = 0;
  let missed = 0;
  let pending = 0;
  for (const c of courses) {
    const status = statusOf(c, stoppedAs);
    if (status === "within") within++;
    else if (status === "miss") missed++;
    else pending++;
    if (c.finishedAtHours !== null) {
      ratio.push(c.finishedAtHours / c.planningHours);
      finished.push(true);
    } else if (status === "miss") {
      // Known not to finish by the figure: at risk through u = 1 (a censoring tied with an event at 1 is
      // counted after it).
      ratio.push(Math.max(1, c.hoursSoFar / c.planningHours));
      finished.push(false);
    } else if (c.hoursSoFar > 0) {
      ratio.push(c.hoursSoFar / c.planningHours);
      finished.push(false);
    }
    // A course with no hours yet tells nothing about the share and is left out of the estimate.
  }
  const base = { courses: courses.length, within, missed, pending };
  const followedToFigure = ratio.some((u) => u >= 1);
  if (!finished.some(Boolean)) {
    // Nobody has finished: the share within the figure is 0 if someone has been followed past it.
    return followedToFigure
      ? { ...base, coverage: 0, standardError: 0 }
      : { ...base, coverage: null, standardError: null };
  }
  const km = kaplanMeier(ratio, finished);
  let survival = 1;
  let standardError = 0;
  for (let j = 0; j < km.times.length && km.times[j] <= 1; j++) {
    survival = km.survival[j];
    standardError = km.standardErrors[j];
  }
  // Beyond the last observation the estimate is undefined unless it already reached 0.
  if (!followedToFigure && survival > 0) return { ...base, coverage: null, standardError: null };
  return { ...base, coverage: 1 - survival, standardError };
}

/** P(X ≤ x) for X ~ Binomial(n, p), summed exactly in log space (no rounding of the tail). */
export function binomialLowerTail(x: number, n: number, p: number): number {
  if (!Number.isInteger(n) || n < 0) throw new Error(`n must be a whole number ≥ 0, got ${n}`);
  if (!(p >= 0 && p <= 1)) throw new Error(`p must be between 0 and 1, got ${p}`);
  if (x < 0) return 0;
  if (x >= n) return 1;
  if (p === 0) return 1;
  if (p === 1) return 0;
  const k = Math.floor(x);
  const logP = Math.log(p);
  const logQ = Math.log1p(-p);
  // log pmf(0) = n·log q; pmf(j + 1) / pmf(j) = (n − j)/(j + 1) · p/q.
  const terms: number[] = [n * logQ];
  for (let j = 0; j < k; j++) terms.push(terms[j] + Math.log((n - j) / (j + 1)) + logP - logQ);
  const largest = Math.max(...terms);
  let sum = 0;
  for (const t of terms) sum += Math.exp(t - largest);
  return Math.min(1, Math.exp(largest + Math.log(sum)));
}

/**
 * One-sided Clopper–Pearson (1934) upper confidence bound: the p at which P(X ≤ x | n, p) = α
 * (1 when x = n). Found by bisection on the exact tail, which falls as p rises.
 */
export function clopperPearsonUpper(x: number, n: number, alpha: number): number {
  if (!Number.isInteger(n) || n < 1) throw new Error(`n must be a whole number ≥ 1, got ${n}`);
  if (!Number.isInteger(x) || x < 0 || x > n) throw new Error(`x must be a whole number from 0 to ${n}, got ${x}`);
  if (!(alpha > 0 && alpha < 1)) throw new Error(`alpha must be between 0 and 1, got ${alpha}`);
  if (x === n) return 1;
  let low = 0;
  let high = 1;
  for (let i = 0; i < 200 && high - low > 1e-15; i++) {
    const mid = (low + high) / 2;
    if (binomialLowerTail(x, n, mid) > alpha) low = mid;
    else high = mid;
  }
  return (low + high) / 2;
}

/** The drift alarm: one-sided exact binomial test of coverage < target on the resolved courses. */
export function coverageAlarm(
  courses: PlannedCourse[],
  options?: CalibrationOptions & { target?: number; alpha?: number },
): CoverageAlarm {
  validateCourses(courses);
  const stoppedAs = stoppedSetting(options);
  const target = options?.target ?? 0.8;
  const alpha = options?.alpha ?? 0.05;
  if (!(target > 0 && target < 1)) throw new Error(`target coverage must be between 0 and 1, got ${target}`);
  if (!(alpha > 0 && alpha < 0.5)) throw new Error(`alpha must be between 0 and 0.5, got ${alpha}`);
  let within = 0;
  let resolved = 0;
  for (const c of courses) {
    const status = statusOf(c, stoppedAs);
    if (status === "pending") continue;
    resolved++;
    if (status === "within") within++;
  }
  const rule = `alarm when P(X ≤ ${within} | Binomial(${resolved}, ${target})) ≤ ${alpha} (one-sided exact binomial test)`;
  if (resolved === 0) return { alarm: false, target, alpha, resolved, within, pValue: null, upperBound: null, rule };
  const pValue = binomialLowerTail(within, resolved, target);
  return {
    alarm: pValue <= alpha,
    target,
    alpha,
    resolved,
    within,
    pValue,
    upperBound: clopperPearsonUpper(within, resolved, alpha),
    rule,
  };
}

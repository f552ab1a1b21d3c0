// Remaining-hours forecast during training (docs/methods.md).
//
// Two estimates of log(remaining hours) are combined:
// • the prior — the baseline regression forecast, conditioned on the hours already trained;
// • the evidence — the remaining hours until the proficiency rule (k consecutive sessions at or above the
// criterion) is met, by seeded simulation of future sessions under the fitted progress curve, its
// session-to-session noise and its parameter uncertainty (proficiency-simulation.ts), summarised on the
// log scale.
// Both are treated as normal on the log scale and combined by inverse-variance weighting, which is the
// normal–normal posterior with known variances (Gelman et al., Bayesian Data Analysis, 3rd ed., §2.5):
// mean = (m₁/v₁ + m₂/v₂)/(1/v₁ + 1/v₂), variance = 1/(1/v₁ + 1/v₂). When the prior alone decides, its own
// quantiles are used (Student t where the baseline forecast is t).
// When the curve plateaus below the criterion the result is a review flag; the curve is never
// extrapolated past its plateau and no combined number is produced.

import { type CurveFit, plateausBelowCriterion } from "./curve";
import type { ProficiencyCriterion } from "./proficiency-rule";
import { simulatedQuantile, simulateRemaining } from "./proficiency-simulation";
import { normalCdf, normalQuantile, studentTCdf, studentTQuantile } from "./student-t";

/** A forecast of hours as a distribution on the log scale. */
export interface LogHoursEstimate {
  logMean: number;
  logSD: number;
}

// Probability points one standard deviation either side of the median of a normal.
const ONE_SD_LOWER = 0.15865525393145707; // Φ(−1)
const ONE_SD_UPPER = 0.8413447460685429; // Φ(+1)

/**
 * Turn the baseline forecast of TOTAL hours (log scale: mean + SD·t(df), or normal when df is omitted)
 * into a forecast of REMAINING hours for someone who has trained `hoursDone` without yet meeting the
 * criterion. Quantiles of the conditional distribution T | T > d are F⁻¹(F(d) + q·(1 − F(d))); the
 * remaining hours are those minus d. The result is summarised back on the log scale: median → logMean,
 * half the log distance between the Φ(±1) quantiles → logSD (exact when d = 0).
 * `beyondForecast` marks a trainee already past the baseline's 99th percentile (worth a review).
 */
export function remainingFromBaseline(
  total: { logMean: number; logSD: number; df?: number },
  hoursDone: number,
): PriorEstimate & { medianHours: number; beyondForecast: boolean } {
  if (!(total.logSD > 0)) throw new RangeError("baseline logSD must be > 0");
  if (!(hoursDone >= 0)) throw new RangeError("hoursDone must be ≥ 0");
  const df = total.df;
  const cdf = (z: number) => (df === undefined ? normalCdf(z) : studentTCdf(z, df));
  const inv = (p: number) => (df === undefined ? normalQuantile(p) : studentTQuantile(p, df));
  const doneProbability = hoursDone > 0 ? cdf((Math.log(hoursDone) - total.logMean) / total.logSD) : 0;
  // Keep the survivor share away from 0 so the quantile stays finite for far-out trainees.
  const survivor = Math.max(1 - doneProbability, 1e-12);
  const remainingAt = (q: number) => {
    const p = Math.min(1 - survivor * (1 - q), 1 - 1e-15);
    return Math.exp(total.logMean + total.logSD * inv(p)) - hoursDone;
  };
  const median = remainingAt(0.5);
  const lowerOneSD = remainingAt(ONE_SD_LOWER);
  const upperOneSD = remainingAt(ONE_SD_UPPER);
  return {
    logMean: Math.log(median),
    logSD: (Math.log(upperOneSD) - Math.log(lowerOneSD)) / 2,
    medianHours: median,
    beyondForecast: survivor < 0.01,
    remainingAt,
  };
}

/** The prior, optionally with its exact quantile function (remaining hours at probability q). */
export type PriorEstimate = LogHoursEstimate & { remainingAt?: (q: number) => number };

export interface CurveSimulationSummary {
  draws: number;
  seed: number;
  sessionHours: number;
  /** Share of simulated courses that met the criterion within the horizon. */
  reachedShare: number;
  maxSessions: number;
}

export type CurveEvidence =
  | {
      status: "estimate";
      /** Median of the simulated remaining hours. */
      remainingHours: number;
      logMean: number;
      logSD: number;
      simulation: CurveSimulationSummary;
    }
  | { status: "review"; reason: string }
  | { status: "uninformative"; reason: string };

export interface CurveEvidenceOptions {
  /** Sessions needed before the curve counts as evidence; default parameters + 2. */
  minimumSessions?: number;
  /** z for the plateau test asymptote + z·SE < threshold (default 2). */
  plateauZ?: number;
  draws?: number; // default 2000
  seed?: number;
  maxSessions?: number; // default 300
}

export interface CurveEvidenceInput {
  fit: CurveFit;
  criterion: ProficiencyCriterion;
  hoursDone: number;
  /** Length of each future session (hours). */
  sessionHours: number;
  /** Task scores already logged, in order. */
  loggedScores: number[];
  options?: CurveEvidenceOptions;
}

/**
 * What the progress curve alone says about remaining hours: the simulated distribution of the hours until
 * the proficiency rule is met, summarised on the log scale as for the prior (median → logMean, half the log
 * distance between the Φ(±1) quantiles → logSD). Remaining hours come in whole sessions, so logSD is at
 * least half a session on the log scale, ln(1 + session/(2·median)).
 */
export function curveRemainingHours(input: CurveEvidenceInput): CurveEvidence {
  const { fit, criterion, options } = input;
  const threshold = criterion.scoreThreshold;
  const parameters = fit.parameterNames.length;
  const minimumSessions = options?.minimumSessions ?? parameters + 2;
  if (fit.n < minimumSessions) {
    return { status: "uninformative", reason: `only ${fit.n} sessions; the curve needs ${minimumSessions}` };
  }
  if (!fit.converged) return { status: "uninformative", reason: "the curve fit did not converge" };
  if (plateausBelowCriterion(fit, threshold, options?.plateauZ ?? 2)) {
    return {
      status: "review",
      reason: `the curve levels off at ${fit.asymptote.toPrecision(3)} (SE ${fit.standardErrors.asymptote.toPrecision(2)}), below the criterion ${threshold}`,
    };
  }
  let sim: ReturnType<typeof simulateRemaining>;
  try {
    sim = simulateRemaining({
      fit,
      criterion,
      hoursDone: input.hoursDone,
      sessionHours: input.sessionHours,
      loggedScores: input.loggedScores,
      draws: options?.draws,
      seed: options?.seed,
      maxSessions: options?.maxSessions,
    });
  } catch (e) {
    if (e instanceof RangeError) return { status: "uninformative", reason: e.message };
    throw e;
  }
  const median = simulatedQuantile(sim, 0.5);
  const lower = simulatedQuantile(sim, ONE_SD_LOWER);
  const upper = simulatedQuantile(sim, ONE_SD_UPPER);
  if (median === null || lower === null || upper === null) {
    return {
      status: "uninformative",
      reason: `in ${Math.round((1 - sim.reachedShare) * 100)} % of ${sim.draws} simulated courses the criterion was not met within ${sim.maxSessions} sessions`,
    };
  }
  const floor = Math.log(1 + sim.sessionHours / (2 * median));
  return {
    status: "estimate",
    remainingHours: median,
    logMean: Math.log(median),
    logSD: Math.max((Math.log(upper) - Math.log(lower)) / 2, floor),
    simulation: {
      draws: sim.draws,
      seed: sim.seed,
      sessionHours: sim.sessionHours,
      reachedShare: sim.reachedShare,
      maxSessions: sim.maxSessions,
    },
  };
}

/** Inverse-variance (precision-weighted) combination of independent normal estimates. */
export function inverseVarianceCombine(estimates: LogHoursEstimate[]): LogHoursEstimate & { weights: number[] } {
  if (estimates.length === 0) throw new Error("nothing to combine");
  const precisions = estimates.map((e) => {
    if (!(e.logSD > 0)) throw new RangeError("every estimate needs logSD > 0");
    return 1 / (e.logSD * e.logSD);
  });
  const total = precisions.reduce((s, w) => s + w, 0);
  const logMean = estimates.reduce((s, e, i) => s + precisions[i] * e.logMean, 0) / total;
  return { logMean, logSD: 1 / Math.sqrt(total), weights: precisions.map((w) => w / total) };
}

export interface RemainingHoursForecast {
  /** combined = prior and curve; prior-only = the curve could not inform; review = plateau below criterion. */
  status: "combined" | "prior-only" | "review";
  /** Median remaining hours; null under review (no number is extrapolated). */
  remainingHours: number | null;
  /** The planning figure: the `quantile` point of the combined distribution; null under review. */
  planningHours: number | null;
  quantile: number;
  /** Central interval at `level`; null under review. */
  interval: { lower: number; upper: number; level: number } | null;
  logMean: number | null;
  logSD: number | null;
  /** Share of the weight carried by the baseline prior and the curve (sum to 1). */
  weights: { prior: number; curve: number };
  prior: LogHoursEstimate;
  curve: CurveEvidence;
  reason?: string;
}

/**
 * Remaining-hours forecast for a trainee: baseline prior (already expressed as remaining hours, e.g. by
 * remainingFromBaseline) combined with the progress-curve evidence. `curve: null` (no usable fit) leaves the
 * prior alone, with `reason`.
 */
export function combineRemainingHours(input: {
  prior: PriorEstimate;
  curve: CurveEvidenceInput | null;
  /** Why there is no curve (with `curve: null`). */
  reason?: string;
  quantile?: number; // default 0.80, as for plans
  level?: number; // default 0.80
}): RemainingHoursForecast {
  const quantile = input.quantile ?? 0.8;
  const level = input.level ?? 0.8;
  const { prior } = input;
  const evidence: CurveEvidence = input.curve
    ? curveRemainingHours(input.curve)
    : { status: "uninformative", reason: input.reason ?? "no progress curve" };

  if (evidence.status === "review") {
    return {
      status: "review",
      remainingHours: null,
      planningHours: null,
      quantile,
      interval: null,
      logMean: null,
      logSD: null,
      weights: { prior: 1, curve: 0 },
      prior,
      curve: evidence,
      reason: evidence.reason,
    };
  }
  if (evidence.status === "uninformative") {
    // The prior alone: its own quantiles (t where the baseline is t), else the normal on the log scale.
    const at = prior.remainingAt ?? ((q: number) => Math.exp(prior.logMean + normalQuantile(q) * prior.logSD));
    return {
      status: "prior-only",
      remainingHours: at(0.5),
      planningHours: at(quantile),
      quantile,
      interval: { lower: at((1 - level) / 2), upper: at((1 + level) / 2), level },
      logMean: prior.logMean,
      logSD: prior.logSD,
      weights: { prior: 1, curve: 0 },
      prior,
      curve: evidence,
      reason: evidence.reason,
    };
  }
  const combined = inverseVarianceCombine([prior, evidence]);
  const zq = normalQuantile(quantile);
  const zl = normalQuantile((1 + level) / 2);
  return {
    status: "combined",
    remainingHours: Math.exp(combined.logMean),
    planningHours: Math.exp(combined.logMean + zq * combined.logSD),
    quantile,
    interval: {
      lower: Math.exp(combined.logMean - zl * combined.logSD),
      upper: Math.exp(combined.logMean + zl * combined.logSD),
      level,
    },
    logMean: combined.logMean,
    logSD: combined.logSD,
    weights: { prior: combined.weights[0], curve: combined.weights[1] },
    prior,
    curve: evidence,
  };
}

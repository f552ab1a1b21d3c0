// Progress update for one trainee (docs/methods.md): fit the exponential and the power-law progress curve
// to the logged sessions and keep the one with the lower AICc, turn the baseline forecast into remaining
// hours given the hours already done, simulate the remaining sessions until the proficiency rule is met
// under the chosen curve, and combine the two by their uncertainties (forecast-combine.ts). A plateau below
// the criterion is a review flag, never an extrapolated number. Pure: no database, no clock.
import { median } from "simple-statistics";
import {
  type CurveCandidate,
  type CurveFit,
  type CurveKind,
  type CurveParameters,
  chooseProgressCurve,
  curveScore,
} from "./curve";
import { type CurveSimulationSummary, combineRemainingHours, remainingFromBaseline } from "./forecast-combine";
import type { ProficiencyCriterion } from "./proficiency-rule";

export interface ProgressInput {
  /** Baseline forecast of TOTAL hours: log-hours ~ logMean + logScale·t(df). */
  baseline: { logMean: number; logScale: number; df: number };
  /** Logged sessions in order: cumulative practice hours after the session and its task score (0–1). */
  sessions: { cumulativeHours: number; score: number }[];
  hoursDone: number;
  /** The criterion's score; with `consecutiveSessions` (default 1) the proficiency rule. */
  threshold: number;
  consecutiveSessions?: number;
  /** Length of each future session; default the median length of the logged sessions. */
  sessionHours?: number;
  quantile?: number; // planning quantile, default 0.80
  level?: number; // interval level, default 0.80
  /** Seed of the simulation (default fixed, so the same log gives the same forecast). */
  seed?: number;
}

export interface ProgressUpdate {
  status: "combined" | "prior-only" | "review";
  remainingHours: number | null;
  remainingLower: number | null;
  remainingUpper: number | null;
  remainingPlanningHours: number | null;
  /** Share of the weight carried by the curve (0 when it could not inform). */
  curveWeight: number;
  reason: string | null;
  beyondForecast: boolean;
  curve: (Pick<CurveFit, "asymptote" | "start" | "rate" | "converged" | "n"> & { kind: CurveKind }) | null;
  /** Which curve was used and why, with each candidate's AICc and Akaike weight (null without a fit). */
  curveChoice: { basis: string; candidates: CurveCandidate[] } | null;
  /** The simulation behind the curve's evidence (null when the curve did not inform). */
  simulation: CurveSimulationSummary | null;
  /** Predicted cumulative hours at which the criterion is met, with the interval (null under review). */
  crossing: { hours: number; lower: number; upper: number } | null;
}

/** Length of each logged session from the cumulative hours (the first from 0). */
function sessionLengths(sessions: { cumulativeHours: number }[]): number[] {
  return sessions.map((s, i) => s.cumulativeHours - (i === 0 ? 0 : sessions[i - 1].cumulativeHours));
}

export function progressUpdate(input: ProgressInput): ProgressUpdate {
  const quantile = input.quantile ?? 0.8;
  const level = input.level ?? 0.8;
  const criterion: ProficiencyCriterion = {
    scoreThreshold: input.threshold,
    consecutiveSessions: input.consecutiveSessions ?? 1,
  };
  input.sessions.forEach((s, i) => {
    if (!(s.cumulativeHours > 0) || !Number.isFinite(s.cumulativeHours))
      throw new RangeError(`session ${i + 1}: cumulative hours must be more than 0, got ${s.cumulativeHours}`);
    if (i > 0 && !(s.cumulativeHours >= input.sessions[i - 1].cumulativeHours))
      throw new RangeError(
        `session ${i + 1}: cumulative hours go down (${s.cumulativeHours} after ${input.sessions[i - 1].cumulativeHours})`,
      );
  });
  const prior = remainingFromBaseline(
    { logMean: input.baseline.logMean, logSD: input.baseline.logScale, df: input.baseline.df },
    input.hoursDone,
  );
  let choice: ReturnType<typeof chooseProgressCurve> | null = null;
  let fitReason: string | null = null;
  if (input.sessions.length >= 3) {
    try {
      choice = chooseProgressCurve(
        input.sessions.map((s) => s.cumulativeHours),
        input.sessions.map((s) => s.score),
      );
    } catch (e) {
      fitReason = `the curve could not be fitted (${(e as Error).message})`;
    }
  } else {
    fitReason = `only ${input.sessions.length} session${input.sessions.length === 1 ? "" : "s"}; the curve needs at least 5`;
  }
  const lengths = sessionLengths(input.sessions).filter((h) => h > 0);
  const sessionHours = input.sessionHours ?? (lengths.length ? median(lengths) : 1);

  const fit = choice?.fit ?? null;
  const combined = combineRemainingHours({
    prior,
    curve: fit
      ? {
          fit,
          criterion,
          hoursDone: input.hoursDone,
          sessionHours,
          loggedScores: input.sessions.map((s) => s.score),
          options: input.seed === undefined ? undefined : { seed: input.seed },
        }
      : null,
    reason: fitReason ?? undefined,
    quantile,
    level,
  });

  const curve = fit
    ? {
        kind: fit.kind,
        asymptote: fit.asymptote,
        start: fit.start,
        rate: fit.rate,
        converged: fit.converged,
        n: fit.n,
      }
    : null;
  const curveChoice = choice ? { basis: choice.basis, candidates: choice.candidates } : null;
  const simulation = combined.curve.status === "estimate" ? combined.curve.simulation : null;
  if (combined.status === "review" || combined.remainingHours === null || combined.interval === null) {
    return {
      status: "review",
      remainingHours: null,
      remainingLower: null,
      remainingUpper: null,
      remainingPlanningHours: null,
      curveWeight: 0,
      reason: combined.reason ?? null,
      beyondForecast: prior.beyondForecast,
      curve,
      curveChoice,
      simulation: null,
      crossing: null,
    };
  }
  const { lower, upper } = combined.interval;
  return {
    status: combined.status,
    remainingHours: combined.remainingHours,
    remainingLower: lower,
    remainingUpper: upper,
    remainingPlanningHours: combined.planningHours,
    curveWeight: combined.weights.curve,
    reason: combined.reason ?? null,
    beyondForecast: prior.beyondForecast,
    curve,
    curveChoice,
    simulation,
    crossing: {
      hours: input.hoursDone + combined.remainingHours,
      lower: input.hoursDone + lower,
      upper: input.hoursDone + upper,
    },
  };
}

/** Points of the fitted curve from 0 to `toHours` for charts. */
export function curvePoints(curve: CurveParameters, toHours: number, steps = 60): { hours: number; score: number }[] {
  const out: { hours: number; score: number }[] = [];
  for (let i = 0; i <= steps; i++) {
    const h = (toHours * i) / steps;
    out.push({ hours: h, score: curveScore(curve, h) });
  }
  return out;
}

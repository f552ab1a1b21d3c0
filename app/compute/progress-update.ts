// Progress update for one trainee (docs/methods.md): fit the saturating-exponential curve to
// the logged sessions, turn the baseline forecast into remaining hours given the hours already done, and
// combine the two by their uncertainties (forecast-combine.ts). A plateau below the criterion is a review
// flag, never an extrapolated number. Pure: no database, no clock.
import { curveScore, fitSaturatingExponential, type SaturatingExponentialFit } from "./curve";
import { combineRemainingHours, remainingFromBaseline } from "./forecast-combine";
import { normalQuantile } from "./student-t";

export interface ProgressInput {
  /** Baseline forecast of TOTAL hours: log-hours ~ logMean + logScale·t(df). */
  baseline: { logMean: number; logScale: number; df: number };
  /** Logged sessions in order: cumulative practice hours after the session and its task score (0–1). */
  sessions: { cumulativeHours: number; score: number }[];
  hoursDone: number;
  threshold: number;
  quantile?: number; // planning quantile, default 0.80
  level?: number; // interval level, default 0.80
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
  curve: Pick<SaturatingExponentialFit, "asymptote" | "start" | "rate" | "converged" | "n"> | null;
  /** Predicted cumulative hours at which the criterion is met, with the interval (null under review). */
  crossing: { hours: number; lower: number; upper: number } | null;
}

export function progressUpdate(input: ProgressInput): ProgressUpdate {
  const quantile = input.quantile ?? 0.8;
  const level = input.level ?? 0.8;
  const prior = remainingFromBaseline(
    { logMean: input.baseline.logMean, logSD: input.baseline.logScale, df: input.baseline.df },
    input.hoursDone,
  );
  let fit: SaturatingExponentialFit | null = null;
  let fitReason: string | null = null;
  if (input.sessions.length >= 3) {
    try {
      fit = fitSaturatingExponential(
        input.sessions.map((s) => s.cumulativeHours),
        input.sessions.map((s) => s.score),
      );
    } catch (e) {
      fitReason = `the curve could not be fitted (${(e as Error).message})`;
    }
  } else {
    fitReason = `only ${input.sessions.length} session${input.sessions.length === 1 ? "" : "s"}; the curve needs at least 5`;
  }

  let status: ProgressUpdate["status"];
  let logMean: number | null;
  let logSD: number | null;
  let curveWeight = 0;
  let reason: string | null = fitReason;
  if (fit) {
    const combined = combineRemainingHours({
      prior,
      curve: { fit, threshold: input.threshold, hoursDone: input.hoursDone },
      quantile,
      level,
    });
    status = combined.status;
    logMean = combined.logMean;
    logSD = combined.logSD;
    curveWeight = combined.weights.curve;
    reason = combined.reason ?? null;
  } else {
    status = "prior-only";
    logMean = prior.logMean;
    logSD = prior.logSD;
  }

  const curve = fit
    ? { asymptote: fit.asymptote, start: fit.start, rate: fit.rate, converged: fit.converged, n: fit.n }
    : null;
  if (status === "review" || logMean === null || logSD === null) {
    return {
      status: "review",
      remainingHours: null,
      remainingLower: null,
      remainingUpper: null,
      remainingPlanningHours: null,
      curveWeight: 0,
      reason,
      beyondForecast: prior.beyondForecast,
      curve,
      crossing: null,
    };
  }
  const zl = normalQuantile((1 + level) / 2);
  const remainingHours = Math.exp(logMean);
  const remainingLower = Math.exp(logMean - zl * logSD);
  const remainingUpper = Math.exp(logMean + zl * logSD);
  return {
    status,
    remainingHours,
    remainingLower,
    remainingUpper,
    remainingPlanningHours: Math.exp(logMean + normalQuantile(quantile) * logSD),
    curveWeight,
    reason,
    beyondForecast: prior.beyondForecast,
    curve,
    crossing: {
      hours: input.hoursDone + remainingHours,
      lower: input.hoursDone + remainingLower,
      upper: input.hoursDone + remainingUpper,
    },
  };
}

/** Points of the fitted curve from 0 to `toHours` for charts. */
export function curvePoints(
  curve: { asymptote: number; start: number; rate: number },
  toHours: number,
  steps = 60,
): { hours: number; score: number }[] {
  const out: { hours: number; score: number }[] = [];
  for (let i = 0; i <= steps; i++) {
    const h = (toHours * i) / steps;
    out.push({ hours: h, score: curveScore(curve, h) });
  }
  return out;
}

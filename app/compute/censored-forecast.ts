// The forecast model fitted on censored courses, and how well its planning figure holds (docs/methods.md).
//
// Every course of the cohort counts: a completed course is an event at its hours to proficiency; a course
// still in training when the data was taken, or stopped, is right-censored at the hours it reached. The
// model is log(hours) = β·[1, x] + σ·ε with ε standard normal, fitted by censored maximum likelihood
// (fitLognormalAft). Measures enter standardised with the cohort's mean and SD (so x = 0 is the cohort
// average), exactly as a stored model is applied to a new worker.
//
// Prediction for a new worker uses the stored model like any other version: log-scale mean β·[1, x],
// scale √(σ̂² + [1 x]ᵀ Cov(β̂) [1 x]), Student t with (completed courses − coefficients) degrees of
// freedom — a small-sample allowance that becomes the normal quantile in large cohorts.
//
// Leave-one-out check: each course is predicted by a model refitted without it. Its planning figure is then
// judged with the same censoring as the drift alarm (planningFigureCoverage): the Kaplan–Meier share of
// courses finishing within their figure, stopped courses censored, and as a sensitivity figure stopped
// courses counted as misses. The 80 % central interval is judged on the probability-integral-transform
// scale: u = F(hours) under the held-out predictive distribution, censored where the course is censored;
// its coverage is the Kaplan–Meier F̂(0.9) − F̂(0.1) of u. Risk groups are thirds of the cohort by
// held-out median forecast.
//
// R² is McKelvey & Zavoina's (1975) share of log-hours variance explained by the measures,
// Var(β·x) / (Var(β·x) + σ̂²); without censoring it equals the least-squares R² (σ̂² = RSS/n).

import { type CoverageEstimate, type PlannedCourse, planningFigureCoverage } from "./calibration";
import { logPredictive, type StoredModel } from "./forecast-explain";
import { columnStandardizer, plannedHoursFromLogScale } from "./regression";
import { studentTCdf } from "./student-t";
import { fitLognormalAft, kaplanMeier, type LognormalAftFit } from "./survival";

export type CourseOutcome = "completed" | "training" | "stopped";

export interface CensoredCourse {
  x: number[]; // baseline measures (z-scores), in the model's order
  hours: number; // hours to proficiency (completed) or hours so far (training, stopped)
  outcome: CourseOutcome;
}

export interface HeldOutPrediction {
  hours: number;
  outcome: CourseOutcome;
  median: number;
  lower: number; // 80 % interval
  upper: number;
  planning: number;
}

export interface RiskGroup {
  label: string;
  courses: number;
  planningFrom: number; // smallest held-out planning figure in the group
  planningTo: number;
  coverage: CoverageEstimate;
}

export interface CensoredForecastFit {
  model: StoredModel;
  fit: LognormalAftFit; // on the standardised measures
  completed: number;
  stillTraining: number;
  stopped: number;
  rSquared: number;
  quantile: number;
  /** Empty (NaN, nulls, no predictions) when the check was switched off. */
  loocv: {
    maeHours: number; // completed courses only: |held-out median − hours|
    planningCoverage: CoverageEstimate; // stopped courses censored
    planningCoverageStoppedAsMiss: CoverageEstimate;
    centralCoverage80: number | null;
    predictions: HeldOutPrediction[]; // in cohort order
    riskGroups: RiskGroup[];
  };
}

export const INTERVAL_LEVEL = 0.8;

function storedModelOf(fit: LognormalAftFit, completed: number, means: number[], sds: number[]): StoredModel {
  return {
    coefficients: fit.coefficients,
    covariance: fit.covariance,
    residualSD: fit.sigma,
    dfResidual: completed - fit.coefficients.length,
    means,
    sds,
  };
}

function validate(courses: CensoredCourse[], quantile: number): void {
  if (!Array.isArray(courses) || courses.length === 0) throw new Error("no courses to fit");
  const k = courses[0].x.length;
  courses.forEach((c, i) => {
    if (c.x.length !== k) throw new Error(`course ${i + 1} has ${c.x.length} measures, expected ${k}`);
    if (!(Number.isFinite(c.hours) && c.hours > 0)) {
      throw new Error(`course ${i + 1}: hours must be a positive number, got ${c.hours}`);
    }
    if (c.outcome !== "completed" && c.outcome !== "training" && c.outcome !== "stopped") {
      throw new Error(`course ${i + 1}: outcome must be completed, training or stopped`);
    }
  });
  if (!(quantile > 0 && quantile < 1)) throw new Error(`planning quantile must be between 0 and 1, got ${quantile}`);
  const completed = courses.filter((c) => c.outcome === "completed").length;
  if (completed < k + 3) {
    throw new Error(
      `only ${completed} completed course${completed === 1 ? "" : "s"} for ${k} measure${k === 1 ? "" : "s"}: at least ${k + 3} are needed`,
    );
  }
}

function heldOut(
  model: StoredModel,
  x: number[],
  course: CensoredCourse,
  quantile: number,
): { prediction: HeldOutPrediction; pit: number } {
  const { logFit, logScale } = logPredictive(model, x);
  const planned = plannedHoursFromLogScale(logFit, logScale, model.dfResidual, { quantile, level: INTERVAL_LEVEL });
  return {
    prediction: {
      hours: course.hours,
      outcome: course.outcome,
      median: planned.medianHours,
      lower: planned.lowerHours,
      upper: planned.upperHours,
      planning: planned.planningHours,
    },
    pit: studentTCdf((Math.log(course.hours) - logFit) / logScale, model.dfResidual),
  };
}

function asPlanned(p: HeldOutPrediction): PlannedCourse {
  return {
    planningHours: p.planning,
    hoursSoFar: p.hours,
    finishedAtHours: p.outcome === "completed" ? p.hours : null,
    stopped: p.outcome === "stopped",
  };
}

/** Kaplan–Meier F̂(0.9) − F̂(0.1) of censored PIT values: the share inside the central 80 % interval. */
function centralCoverage(pit: number[], completed: boolean[]): number | null {
  if (pit.length === 0) return null;
  const u = pit.map((v) => Math.min(1, Math.max(v, 1e-300)));
  if (!u.some((v) => v >= 0.9)) return null;
  const km = kaplanMeier(u, completed);
  const survivalAt = (t: number) => {
    let s = 1;
    for (let j = 0; j < km.times.length && km.times[j] <= t; j++) s = km.survival[j];
    return s;
  };
  return survivalAt(0.1) - survivalAt(0.9);
}

const GROUP_LABELS = ["Shortest third of forecasts", "Middle third", "Longest third"];

function riskGroups(predictions: HeldOutPrediction[]): RiskGroup[] {
  const order = predictions.map((_, i) => i).sort((a, b) => predictions[a].median - predictions[b].median || a - b);
  const n = order.length;
  const groups: RiskGroup[] = [];
  for (let g = 0; g < 3; g++) {
    const members = order.slice(Math.round((g * n) / 3), Math.round(((g + 1) * n) / 3)).map((i) => predictions[i]);
    if (members.length === 0) continue;
    const planning = members.map((m) => m.planning);
    groups.push({
      label: GROUP_LABELS[g],
      courses: members.length,
      planningFrom: Math.min(...planning),
      planningTo: Math.max(...planning),
      coverage: planningFigureCoverage(members.map(asPlanned)),
    });
  }
  return groups;
}

/**
 * Fit the forecast model on completed and censored courses, with the leave-one-out check of its planning
 * figure at `quantile`. Throws an Error with a plain message on bad input or a cohort that cannot be fitted.
 */
export function fitCensoredForecast(
  courses: CensoredCourse[],
  options: { quantile: number; leaveOneOut?: boolean },
): CensoredForecastFit {
  validate(courses, options.quantile);
  const { quantile } = options;
  const std = columnStandardizer(courses.map((c) => c.x));
  const Z = courses.map((c) => std.apply(c.x));
  const time = courses.map((c) => c.hours);
  const event = courses.map((c) => c.outcome === "completed");
  const completed = event.filter(Boolean).length;
  const fit = fitLognormalAft(Z, time, event);
  const model = storedModelOf(fit, completed, std.means, std.sds);

  const linear = Z.map((z) => z.reduce((s, v, j) => s + v * fit.coefficients[j + 1], fit.coefficients[0]));
  const meanLinear = linear.reduce((s, v) => s + v, 0) / linear.length;
  const varLinear = linear.reduce((s, v) => s + (v - meanLinear) ** 2, 0) / linear.length;
  const rSquared = varLinear / (varLinear + fit.sigma ** 2);

  const predictions: HeldOutPrediction[] = [];
  const pit: number[] = [];
  const rounds = options.leaveOneOut === false ? 0 : courses.length;
  for (let i = 0; i < rounds; i++) {
    const keep = (_: unknown, r: number) => r !== i;
    const without = fitLognormalAft(Z.filter(keep), time.filter(keep), event.filter(keep));
    const held = heldOut(
      storedModelOf(without, completed - (event[i] ? 1 : 0), std.means, std.sds),
      Z[i],
      courses[i],
      quantile,
    );
    predictions.push(held.prediction);
    pit.push(held.pit);
  }
  const done = predictions.filter((p) => p.outcome === "completed");
  const maeHours = done.length ? done.reduce((s, p) => s + Math.abs(p.median - p.hours), 0) / done.length : Number.NaN;
  const planned = predictions.map(asPlanned);
  return {
    model,
    fit,
    completed,
    stillTraining: courses.filter((c) => c.outcome === "training").length,
    stopped: courses.filter((c) => c.outcome === "stopped").length,
    rSquared,
    quantile,
    loocv: {
      maeHours,
      planningCoverage: planningFigureCoverage(planned),
      planningCoverageStoppedAsMiss: planningFigureCoverage(planned, { stoppedAs: "miss" }),
      centralCoverage80: centralCoverage(pit, event.slice(0, rounds)),
      predictions,
      riskGroups: riskGroups(predictions),
    },
  };
}

// Worker-level forecast from a stored model version (docs/methods.md) and its plain-words explanation.
// The model is log(hours) = b₀ + Σ b_j·x_j with x_j the worker's baseline z-score on measure j,
// standardised again with the cohort's mean and SD of that z-score (so x = 0 is the cohort average).
// Pure: no database, no clock.
import { type PlannedHours, plannedHoursFromLogScale } from "./regression";

export interface StoredModel {
  coefficients: number[]; // intercept first
  covariance: number[][]; // σ²-scaled covariance of the coefficients, same order
  residualSD: number;
  dfResidual: number;
  means: number[]; // cohort mean of each measure's z-score
  sds: number[]; // cohort SD of each measure's z-score
}

export interface MeasureLabel {
  code: string;
  label: string;
}

export interface Contribution {
  measureCode: string;
  label: string;
  zScore: number; // the worker's baseline z-score (positive = better than the norm)
  standardised: number; // (z − cohort mean)/cohort SD
  coefficient: number; // log-hours per cohort SD
  logContribution: number; // coefficient × standardised
  multiplier: number; // exp(logContribution)
  sentence: string;
}

export interface WorkerForecastNumbers extends PlannedHours {
  baselineHours: number; // exp(b₀): a worker at the cohort average on every measure
  contributions: Contribution[];
}

function percent(m: number): string {
  const p = Math.round(Math.abs(m - 1) * 100);
  return `${p} %`;
}

function sentenceFor(label: string, standardised: number, multiplier: number): string {
  const sd = Math.abs(standardised);
  const where =
    sd < 0.05
      ? "about at the cohort average"
      : `${sd.toFixed(1)} SD ${standardised > 0 ? "better" : "worse"} than the cohort average`;
  if (Math.abs(multiplier - 1) < 0.005) return `${label}: ${where}; this barely moves the forecast.`;
  return `${label}: ${where}; this ${multiplier < 1 ? "lowers" : "raises"} the forecast by about ${percent(multiplier)} (×${multiplier.toFixed(2)}).`;
}

/** Predictive distribution on the log scale: mean b₀ + bᵀx, scale √(σ² + [1 x]ᵀ Cov [1 x]), t with df. */
export function logPredictive(model: StoredModel, x: number[]): { logFit: number; logScale: number } {
  const v = [1, ...x];
  if (v.length !== model.coefficients.length)
    throw new Error(`expected ${model.coefficients.length - 1} measures, got ${x.length}`);
  const logFit = v.reduce((s, vi, i) => s + vi * model.coefficients[i], 0);
  let fitVar = 0;
  for (let a = 0; a < v.length; a++) for (let b = 0; b < v.length; b++) fitVar += v[a] * model.covariance[a][b] * v[b];
  return { logFit, logScale: Math.sqrt(model.residualSD ** 2 + fitVar) };
}

/** Hours figures and explanation for one worker's baseline z-scores (in the model's measure order). */
export function forecastFromModel(
  model: StoredModel,
  measures: MeasureLabel[],
  zScores: number[],
  options?: { quantile?: number; level?: number },
): WorkerForecastNumbers {
  if (zScores.length !== measures.length || measures.length !== model.means.length) {
    throw new Error("measures, z-scores and the model's standardisation must have the same length");
  }
  const x = zScores.map((z, j) => (z - model.means[j]) / model.sds[j]);
  const { logFit, logScale } = logPredictive(model, x);
  const planned = plannedHoursFromLogScale(logFit, logScale, model.dfResidual, options);
  const contributions = measures.map((m, j) => {
    const coefficient = model.coefficients[j + 1];
    const logContribution = coefficient * x[j];
    const multiplier = Math.exp(logContribution);
    return {
      measureCode: m.code,
      label: m.label,
      zScore: zScores[j],
      standardised: x[j],
      coefficient,
      logContribution,
      multiplier,
      sentence: sentenceFor(m.label, x[j], multiplier),
    };
  });
  return { ...planned, baselineHours: Math.exp(model.coefficients[0]), contributions };
}

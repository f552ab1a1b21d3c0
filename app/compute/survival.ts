// Time to proficiency with right-censoring (docs/methods.md).
//
// A course that reached proficiency at t hours is an event at t. A course still in training, or stopped,
// after t hours is right-censored at t: its time to proficiency is known only to exceed t. Dropping such
// courses removes the slowest learners and biases every figure low, so both functions here use them.
//
// kaplanMeier: the product-limit estimate (Kaplan & Meier 1958) with Greenwood's (1926) variance. A course
// censored at the same time as an event is counted at risk at that event (the usual convention).
//
// fitLognormalAft: log(time) = β·[1, x] + σ·ε with ε standard normal — the log-normal accelerated failure
// time model (Kalbfleisch & Prentice 2002, ch. 3) — fitted by maximum likelihood. In (β, log σ) the log
// likelihood is not concave everywhere, so the maximisation runs in Olsen's (1978) parameters γ = β/σ,
// τ = 1/σ, where it is concave: each completed course contributes log τ − ½(τy − xγ)² and each censored
// course log(1 − Φ(τy − xγ)), and log(1 − Φ) is concave. Newton's method with step halving therefore
// climbs to the unique maximum from any start. Standard errors come from the observed information,
// carried to (β, log σ) by the delta method — exact at the maximum, where the gradient is zero.
// Measures are centred and scaled to unit SD inside the fit (for conditioning) and the results are
// reported on the caller's scale.

import { CholeskyDecomposition, Matrix, QrDecomposition } from "ml-matrix";
import { normalHazard, normalLogDensity, normalLogUpperTail } from "./normal-tail";
import { normalQuantile } from "./student-t";

export interface KaplanMeierEstimate {
  times: number[]; // distinct times with an event, ascending
  survival: number[]; // S(t) just after each of those times
  atRisk: number[];
  events: number[];
  standardErrors: number[]; // Greenwood
  median: number | null; // smallest time with S ≤ 0.5; null if never reached
}

export interface LognormalAftFit {
  coefficients: number[]; // intercept first, effects on log(time)
  standardErrors: number[]; // from the observed information matrix
  covariance: number[][]; // of the coefficients (same order), from the observed information matrix
  sigma: number; // scale of log(time)
  logSigmaStandardError: number;
  logLikelihood: number; // Σ events [log φ(z) − log σ] + Σ censored log(1 − Φ(z)), on the log-time scale
  converged: boolean;
  iterations: number;
  quantile(x: number[], p: number): number; // hours: exp(β·[1, x] + σ·Φ⁻¹(p))
}

function validateTimes(time: number[], event: boolean[]): void {
  if (time.length !== event.length) {
    throw new Error(`hours has ${time.length} values but the completed/censored flags have ${event.length}`);
  }
  if (time.length === 0) throw new Error("no courses to analyse");
  for (let i = 0; i < time.length; i++) {
    const t = time[i];
    if (typeof t !== "number" || !Number.isFinite(t) || t <= 0) {
      throw new Error(`hours must be a positive number, but course ${i + 1} has ${t}`);
    }
    if (typeof event[i] !== "boolean") throw new Error(`course ${i + 1} has no completed/censored flag`);
  }
  if (!event.some(Boolean)) {
    throw new Error("no completed course: every course is still running or stopped, so nothing can be estimated");
  }
}

/** Kaplan–Meier product-limit estimate of the share not yet proficient, with Greenwood standard errors. */
export function kaplanMeier(time: number[], event: boolean[]): KaplanMeierEstimate {
  validateTimes(time, event);
  const order = time.map((_, i) => i).sort((a, b) => time[a] - time[b]);
  const result: KaplanMeierEstimate = {
    times: [],
    survival: [],
    atRisk: [],
    events: [],
    standardErrors: [],
    median: null,
  };
  let atRisk = time.length;
  let survival = 1;
  let greenwoodSum = 0;
  let i = 0;
  while (i < order.length) {
    const t = time[order[i]];
    let deaths = 0;
    let leaving = 0;
    while (i < order.length && time[order[i]] === t) {
      if (event[order[i]]) deaths++;
      leaving++;
      i++;
    }
    if (deaths > 0) {
      survival *= 1 - deaths / atRisk;
      // Greenwood: Var S = S²·Σ d/(n(n − d)). Once everyone at risk has finished, S = 0 exactly and the
      // sum is infinite; the estimate S = 0 is then reported with standard error 0.
      greenwoodSum += deaths === atRisk ? Number.POSITIVE_INFINITY : deaths / (atRisk * (atRisk - deaths));
      result.times.push(t);
      result.survival.push(survival);
      result.atRisk.push(atRisk);
      result.events.push(deaths);
      result.standardErrors.push(survival === 0 ? 0 : survival * Math.sqrt(greenwoodSum));
      if (result.median === null && survival <= 0.5) result.median = t;
    }
    atRisk -= leaving;
  }
  return result;
}

interface Evaluation {
  logLikelihood: number;
  gradient: Float64Array;
  /** Negative Hessian (observed information), row-major, size m × m. */
  information: Float64Array;
}

/**
 * Log likelihood, gradient and observed information in Olsen's parameters θ = (γ₀ … γₖ, τ) for design rows
 * `design` (leading 1 included), log times `y` and event flags.
 */
function evaluate(design: Float64Array[], y: Float64Array, event: boolean[], theta: Float64Array): Evaluation {
  const p = theta.length - 1; // number of γ
  const m = p + 1;
  const tau = theta[p];
  const logTau = Math.log(tau);
  const gradient = new Float64Array(m);
  const information = new Float64Array(m * m);
  let logLikelihood = 0;
  for (let i = 0; i < y.length; i++) {
    const row = design[i];
    let eta = tau * y[i];
    for (let j = 0; j < p; j++) eta -= row[j] * theta[j];
    // The contribution has derivative −s and second derivative −w in η; ∂η/∂γ = −x, ∂η/∂τ = y.
    let s: number;
    let w: number;
    if (event[i]) {
      logLikelihood += logTau + normalLogDensity(eta);
      s = eta;
      w = 1;
      gradient[p] += 1 / tau;
      information[p * m + p] += 1 / (tau * tau);
    } else {
      logLikelihood += normalLogUpperTail(eta);
      const hazard = normalHazard(eta);
      s = hazard;
      w = hazard * (hazard - eta);
    }
    const yi = y[i];
    for (let j = 0; j < p; j++) {
      gradient[j] += s * row[j];
      const wr = w * row[j];
      for (let l = 0; l <= j; l++) information[j * m + l] += wr * row[l];
      information[j * m + p] -= wr * yi;
    }
    gradient[p] -= s * yi;
    information[p * m + p] += w * yi * yi;
  }
  for (let j = 0; j < p; j++) {
    for (let l = 0; l < j; l++) information[l * m + j] = information[j * m + l];
  }
  for (let j = 0; j < p; j++) information[p * m + j] = information[j * m + p];
  return { logLikelihood, gradient, information };
}

function choleskyOf(information: Float64Array, m: number): CholeskyDecomposition {
  const matrix = new Matrix(m, m);
  for (let j = 0; j < m; j++) for (let l = 0; l < m; l++) matrix.set(j, l, information[j * m + l]);
  const cholesky = new CholeskyDecomposition(matrix);
  if (!cholesky.isPositiveDefinite()) {
    throw new Error(
      "the measures cannot be separated in this cohort (some are collinear, or there are too few completed courses)",
    );
  }
  return cholesky;
}

// Newton's method stops when half the Newton decrement gᵀ(−H)⁻¹g — the predicted gain still to come —
// falls below this share of 1 + |log likelihood|. The log likelihood is a sum of n terms, so rounding puts
// a floor under the decrement that grows with n (about 4e-17·|ℓ| measured at n = 5,000); the tolerance
// sits just above that floor. Convergence is quadratic, so the step before it is already far smaller.
const RELATIVE_DECREMENT_TOLERANCE = 1e-14;

/** Censored maximum-likelihood fit of log(time) on measures x (log-normal AFT model). */
export function fitLognormalAft(
  x: number[][],
  time: number[],
  event: boolean[],
  options?: { maxIterations?: number },
): LognormalAftFit {
  validateTimes(time, event);
  const n = time.length;
  if (x.length !== n) throw new Error(`the measures have ${x.length} rows but hours has ${n} values`);
  const k = n > 0 ? x[0].length : 0;
  for (let i = 0; i < n; i++) {
    if (!Array.isArray(x[i]) || x[i].length !== k) {
      throw new Error(`course ${i + 1} has ${x[i]?.length ?? 0} measures, expected ${k}`);
    }
    for (let j = 0; j < k; j++) {
      if (!Number.isFinite(x[i][j])) throw new Error(`measure ${j + 1} of course ${i + 1} is not a finite number`);
    }
  }
  const maxIterations = options?.maxIterations ?? 100;
  if (!Number.isInteger(maxIterations) || maxIterations < 1) {
    throw new Error(`maxIterations must be a positive whole number, got ${maxIterations}`);
  }

  // Centre and scale the measures (unit SD) for conditioning; undone when reporting.
  const means = new Array<number>(k).fill(0);
  const sds = new Array<number>(k).fill(1);
  for (let j = 0; j < k; j++) {
    let sum = 0;
    for (let i = 0; i < n; i++) sum += x[i][j];
    means[j] = sum / n;
    let ss = 0;
    for (let i = 0; i < n; i++) ss += (x[i][j] - means[j]) ** 2;
    if (!(ss > 0)) throw new Error(`measure ${j + 1} is the same for every course, so its effect cannot be estimated`);
    sds[j] = Math.sqrt(ss / n);
  }
  const p = k + 1;
  const m = p + 1;
  const design = new Array<Float64Array>(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const row = new Float64Array(p);
    row[0] = 1;
    for (let j = 0; j < k; j++) row[j + 1] = (x[i][j] - means[j]) / sds[j];
    design[i] = row;
    y[i] = Math.log(time[i]);
  }

  // Start: least squares on every log time as if none were censored (a poor but valid start; the
  // likelihood is concave in Olsen's parameters, so Newton with step halving gets there from anywhere).
  const start = startingValues(design, y, p);
  const theta = new Float64Array(m);
  for (let j = 0; j < p; j++) theta[j] = start.beta[j] / start.sigma;
  theta[p] = 1 / start.sigma;

  let current = evaluate(design, y, event, theta);
  let converged = false;
  let iterations = 0;
  let cholesky = choleskyOf(current.information, m);
  while (iterations < maxIterations) {
    const step = cholesky.solve(Matrix.columnVector(Array.from(current.gradient))).getColumn(0);
    let decrement = 0;
    for (let j = 0; j < m; j++) decrement += current.gradient[j] * step[j];
    if (decrement / 2 < RELATIVE_DECREMENT_TOLERANCE * (1 + Math.abs(current.logLikelihood))) {
      converged = true;
      break;
    }
    iterations++;
    // Step halving: keep τ > 0 and never accept a step that lowers the likelihood.
    let factor = 1;
    let accepted: { theta: Float64Array; evaluation: Evaluation } | null = null;
    for (let halving = 0; halving < 40; halving++) {
      const candidate = new Float64Array(m);
      for (let j = 0; j < m; j++) candidate[j] = theta[j] + factor * step[j];
      if (candidate[p] > 0) {
        const evaluation = evaluate(design, y, event, candidate);
        if (Number.isFinite(evaluation.logLikelihood) && evaluation.logLikelihood >= current.logLikelihood) {
          accepted = { theta: candidate, evaluation };
          break;
        }
      }
      factor /= 2;
    }
    if (accepted === null) {
      // No ascent along the Newton direction at working precision: the maximum is reached.
      converged = true;
      break;
    }
    theta.set(accepted.theta);
    current = accepted.evaluation;
    cholesky = choleskyOf(current.information, m);
  }

  // Back to (β, log σ) on the standardised scale, then to the caller's scale.
  const tau = theta[p];
  const sigma = 1 / tau;
  const covarianceOlsen = cholesky.solve(Matrix.eye(m, m));
  // Jacobian of (β₀ … βₖ, log σ) with respect to (γ₀ … γₖ, τ): β = γ/τ, log σ = −log τ.
  const jacobian = Matrix.zeros(m, m);
  for (let j = 0; j < p; j++) {
    jacobian.set(j, j, 1 / tau);
    jacobian.set(j, p, -theta[j] / (tau * tau));
  }
  jacobian.set(p, p, -1 / tau);
  // Map from standardised coefficients to the caller's: βⱼ = β̃ⱼ/sdⱼ, β₀ = β̃₀ − Σ β̃ⱼ·meanⱼ/sdⱼ.
  const unscale = Matrix.eye(m, m);
  for (let j = 0; j < k; j++) {
    unscale.set(j + 1, j + 1, 1 / sds[j]);
    unscale.set(0, j + 1, -means[j] / sds[j]);
  }
  const transform = unscale.mmul(jacobian);
  const covariance = transform.mmul(covarianceOlsen).mmul(transform.transpose());
  const scaledBeta = Array.from({ length: p }, (_, j) => theta[j] / tau);
  const coefficients = new Array<number>(p);
  coefficients[0] = scaledBeta[0];
  for (let j = 0; j < k; j++) {
    coefficients[j + 1] = scaledBeta[j + 1] / sds[j];
    coefficients[0] -= (scaledBeta[j + 1] * means[j]) / sds[j];
  }
  const standardErrors = Array.from({ length: p }, (_, j) => Math.sqrt(covariance.get(j, j)));
  const logSigmaStandardError = Math.sqrt(covariance.get(p, p));
  const coefficientCovariance = Array.from({ length: p }, (_, j) =>
    Array.from({ length: p }, (_, l) => covariance.get(j, l)),
  );

  return {
    coefficients,
    standardErrors,
    covariance: coefficientCovariance,
    sigma,
    logSigmaStandardError,
    logLikelihood: current.logLikelihood,
    converged,
    iterations,
    quantile(measures: number[], probability: number): number {
      if (!Array.isArray(measures) || measures.length !== k) {
        throw new Error(`expected ${k} measures, got ${measures?.length ?? 0}`);
      }
      if (!(probability > 0 && probability < 1))
        throw new Error(`probability must be between 0 and 1, got ${probability}`);
      let logTime = coefficients[0];
      for (let j = 0; j < k; j++) logTime += coefficients[j + 1] * measures[j];
      return Math.exp(logTime + sigma * normalQuantile(probability));
    },
  };
}

/** Least squares of y on the design by Householder QR (ml-matrix), and √(RSS/n). */
function startingValues(design: Float64Array[], y: Float64Array, p: number): { beta: number[]; sigma: number } {
  const n = y.length;
  const beta = new Array<number>(p).fill(0);
  beta[0] = y.reduce((a, b) => a + b, 0) / n;
  if (n > p) {
    const qr = new QrDecomposition(new Matrix(design.map((row) => Array.from(row))));
    if (qr.isFullRank()) {
      const solution = qr.solve(Matrix.columnVector(Array.from(y))).getColumn(0);
      for (let j = 0; j < p; j++) beta[j] = solution[j];
    }
  }
  let rss = 0;
  for (let i = 0; i < n; i++) {
    let fitted = 0;
    for (let j = 0; j < p; j++) fitted += design[i][j] * beta[j];
    rss += (y[i] - fitted) ** 2;
  }
  const sigma = Math.sqrt(rss / n);
  return { beta, sigma: sigma > 1e-8 ? sigma : 1 };
}

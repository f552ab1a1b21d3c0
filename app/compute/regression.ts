// Forecast model (docs/methods.md): linear regression of log(hours to proficiency) on standardised
// baseline measures, with optional ridge penalty, t-based prediction intervals and leave-one-out
// cross-validation.
//
// Numerics. The design matrix is centred (when there is an intercept) and every column scaled to unit
// length before a Householder QR (ml-matrix); the normal equations are never formed, because squaring
// the condition number loses half the digits on collinear cohorts (NIST "Longley" is the standing test).
// Coefficients, standard errors and predictions are reported on the caller's original scale.
//
// Ridge (λ = options.ridge > 0). Minimises ‖y − b₀ − Xb‖² + λ‖b‖²: the intercept is not penalised and the
// penalty applies to the coefficients on the scale of X as given (pass standardised measures, as the
// product does). It is solved as ordinary least squares on rows augmented with √λ·I (stable QR, no
// normal equations). Under ridge:
// • hat matrix H = X(XᵀX + λI)⁻¹Xᵀ (plus 1/n for the intercept); effective parameters = tr(H);
// • dfResidual = n − tr(H) (may be non-integer; jStat's t accepts that);
// • residualSD = √(RSS / dfResidual);
// • standard errors are the square roots of the sandwich covariance
// σ²·(XᵀX + λI)⁻¹XᵀX(XᵀX + λI)⁻¹ (Hoerl & Kennard 1970) — they describe sampling spread around the
// shrunken estimate and ignore its bias, so ridge intervals are somewhat optimistic.

import { Matrix, QrDecomposition, SingularValueDecomposition } from "ml-matrix";
import { studentTQuantile } from "./student-t";

/** The binding contract (docs/methods.md). */
export interface LinearFit {
  coefficients: number[]; // intercept first when intercept = true
  standardErrors: number[];
  residualSD: number; // √(RSS / dfResidual)
  rSquared: number;
  dfResidual: number;
  predict(x: number[]): number; // x without the leading 1
  predictionInterval(x: number[], level: number): { fit: number; lower: number; upper: number };
}

export interface LinearFitOptions {
  intercept?: boolean; // default true
  /** λ, or "gcv" to choose it by generalised cross-validation (ridgeByGcv); default 0. */
  ridge?: number | "gcv";
}

/** What fitLinearModel actually returns: the contract plus diagnostics the model-version record needs. */
export interface LinearModelFit extends LinearFit {
  n: number;
  intercept: boolean;
  ridge: number;
  residualSS: number;
  fittedValues: number[];
  residuals: number[];
  /** Diagonal of the hat matrix, h_ii. */
  leverages: number[];
  /** tr(H): the number of parameters under OLS, fewer under ridge. */
  effectiveParameters: number;
  /** σ²-scaled covariance of the coefficients, same order as `coefficients`. */
  covariance: number[][];
  /** Predictive distribution of a new observation at x: mean + scale·t(df). */
  predictiveDistribution(x: number[]): { mean: number; scale: number; df: number };
}

// Leading diagonal of R below this (columns have unit length) means a column is a linear combination
// of the others: the cohort cannot separate their effects.
const RANK_TOLERANCE = 1e-11;

interface Core {
  n: number;
  k: number;
  intercept: boolean;
  ridge: number;
  means: number[];
  yMean: number;
  slopes: number[];
  /** (σ²-free) covariance of the slopes on the original scale. */
  slopeCov: number[][];
  leverages: number[];
  effectiveParameters: number;
}

function validate(X: number[][], y: number[]): number {
  const n = y.length;
  if (X.length !== n) throw new Error(`X has ${X.length} rows but y has ${n} values`);
  if (n === 0) throw new Error("no records to fit");
  const k = X[0].length;
  for (let i = 0; i < n; i++) {
    if (X[i].length !== k) throw new Error(`row ${i} has ${X[i].length} measures, expected ${k}`);
    if (!Number.isFinite(y[i])) throw new Error(`outcome ${i} is not a finite number`);
    for (let j = 0; j < k; j++) {
      if (!Number.isFinite(X[i][j])) throw new Error(`measure ${j} of row ${i} is not a finite number`);
    }
  }
  return k;
}

/** Mean with a second-pass correction (keeps digits when values sit far from zero, e.g. years). */
function accurateMean(values: ArrayLike<number>): number {
  const n = values.length;
  let sum = 0;
  for (let i = 0; i < n; i++) sum += values[i];
  const first = sum / n;
  let correction = 0;
  for (let i = 0; i < n; i++) correction += values[i] - first;
  return first + correction / n;
}

function invertUpperTriangular(R: Matrix): number[][] {
  const k = R.rows;
  const inv: number[][] = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (let col = 0; col < k; col++) {
    // Solve R·v = e_col by back substitution.
    for (let i = col; i >= 0; i--) {
      let s = i === col ? 1 : 0;
      for (let j = i + 1; j <= col; j++) s -= R.get(i, j) * inv[j][col];
      inv[i][col] = s / R.get(i, i);
    }
  }
  return inv;
}

function fitCore(X: number[][], y: number[], intercept: boolean, ridge: number): Core {
  const k = validate(X, y);
  const n = y.length;
  if (!(ridge >= 0) || !Number.isFinite(ridge)) throw new Error(`ridge must be a finite number ≥ 0, got ${ridge}`);

  const means = new Array<number>(k).fill(0);
  const scales = new Array<number>(k).fill(1);
  const column = new Float64Array(n);
  for (let j = 0; j < k; j++) {
    for (let i = 0; i < n; i++) column[i] = X[i][j];
    if (intercept) means[j] = accurateMean(column);
    let ss = 0;
    for (let i = 0; i < n; i++) ss += (column[i] - means[j]) ** 2;
    if (ss > 0) scales[j] = Math.sqrt(ss);
    else if (ridge === 0) {
      throw new Error(`measure ${j} is ${intercept ? "constant (collinear with the intercept)" : "all zero"}`);
    }
  }
  const yMean = intercept ? accurateMean(y) : 0;

  const slopes = new Array<number>(k).fill(0);
  let slopeCov: number[][] = [];
  const leverages = new Array<number>(n).fill(intercept ? 1 / n : 0);
  let effectiveParameters = intercept ? 1 : 0;

  if (k > 0) {
    const rows = ridge > 0 ? n + k : n;
    const Z = new Matrix(rows, k);
    const rhs = new Matrix(rows, 1);
    for (let i = 0; i < n; i++) {
      const row = X[i];
      for (let j = 0; j < k; j++) Z.set(i, j, (row[j] - means[j]) / scales[j]);
      rhs.set(i, 0, y[i] - yMean);
    }
    if (ridge > 0) {
      const root = Math.sqrt(ridge);
      for (let j = 0; j < k; j++) Z.set(n + j, j, root / scales[j]);
    }
    if (rows < k) throw new Error(`need at least ${k} records for ${k} measures`);

    const qr = new QrDecomposition(Z);
    const R = qr.upperTriangularMatrix;
    for (let j = 0; j < k; j++) {
      if (!(Math.abs(R.get(j, j)) > RANK_TOLERANCE)) {
        throw new Error(`measures are linearly dependent (column ${j}); drop or combine a measure, or use ridge`);
      }
    }
    const scaledBeta = qr.solve(rhs);
    for (let j = 0; j < k; j++) slopes[j] = scaledBeta.get(j, 0) / scales[j];

    const Rinv = invertUpperTriangular(R);
    const Q = qr.orthogonalMatrix; // rows × k, thin
    // G = Q₁ᵀQ₁ over the data rows (identity without ridge); the hat matrix of the data is Q₁Q₁ᵀ.
    const G: number[][] = Array.from({ length: k }, () => new Array<number>(k).fill(0));
    for (let i = 0; i < n; i++) {
      let h = 0;
      for (let a = 0; a < k; a++) {
        const qa = Q.get(i, a);
        h += qa * qa;
        if (ridge > 0) for (let b = a; b < k; b++) G[a][b] += qa * Q.get(i, b);
      }
      leverages[i] += h;
    }
    for (let a = 0; a < k; a++) {
      if (ridge > 0) for (let b = 0; b < a; b++) G[a][b] = G[b][a];
      else G[a][a] = 1;
      effectiveParameters += G[a][a];
    }
    // Cov(scaled β)/σ² = R⁻¹ G R⁻ᵀ; then undo the column scaling.
    const M = Rinv.map((row) => G[0].map((_, b) => row.reduce((s, r, c) => s + r * G[c][b], 0)));
    slopeCov = Array.from({ length: k }, (_, a) =>
      Array.from({ length: k }, (_, b) => {
        let s = 0;
        for (let c = 0; c < k; c++) s += M[a][c] * Rinv[b][c];
        return s / (scales[a] * scales[b]);
      }),
    );
  }

  return { n, k, intercept, ridge, means, yMean, slopes, slopeCov, leverages, effectiveParameters };
}

/** Variance factor v(x) with Var(fit at x) = σ²·v(x). */
function varianceFactor(core: Core, x: number[]): number {
  let v = core.intercept ? 1 / core.n : 0;
  for (let a = 0; a < core.k; a++) {
    const da = x[a] - core.means[a];
    for (let b = 0; b < core.k; b++) v += da * core.slopeCov[a][b] * (x[b] - core.means[b]);
  }
  return v;
}

function centredPredict(core: Core, x: number[]): number {
  if (x.length !== core.k) throw new Error(`expected ${core.k} measures, got ${x.length}`);
  let fit = core.yMean;
  for (let j = 0; j < core.k; j++) fit += core.slopes[j] * (x[j] - core.means[j]);
  return fit;
}

function checkLevel(level: number): void {
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be in (0, 1), got ${level}`);
}

/**
 * Fit y on X by least squares (or ridge) through a QR decomposition.
 * X: rows = records, columns = measures (no column of ones; the intercept is added when intercept = true).
 */
export function fitLinearModel(
  X: number[][],
  y: number[],
  options?: { intercept?: boolean /* true */; ridge?: number | "gcv" /* 0 */ },
): LinearModelFit {
  const intercept = options?.intercept ?? true;
  const ridge = options?.ridge === "gcv" ? ridgeByGcv(X, y, { intercept }).lambda : (options?.ridge ?? 0);
  const core = fitCore(X, y, intercept, ridge);
  const { n, means, slopes, slopeCov } = core;

  const fittedValues = X.map((row) => centredPredict(core, row));
  const residuals = y.map((yi, i) => yi - fittedValues[i]);
  const residualSS = residuals.reduce((s, e) => s + e * e, 0);
  const dfResidual = n - core.effectiveParameters;
  if (!(dfResidual > 0)) {
    throw new Error(`need more records than parameters (n = ${n}, parameters = ${core.effectiveParameters})`);
  }
  const sigma2 = residualSS / dfResidual;
  let totalSS = 0;
  for (const yi of y) totalSS += (yi - core.yMean) ** 2; // yMean = 0 without intercept: uncentred R²
  const rSquared = 1 - residualSS / totalSS;

  // Full covariance/σ² in coefficient order: [b₀,] b₁ … b_k.
  let covariance: number[][];
  let coefficients: number[];
  if (intercept) {
    const Cm = slopeCov.map((row) => row.reduce((s, c, b) => s + c * means[b], 0));
    const interceptVar = 1 / n + Cm.reduce((s, c, a) => s + c * means[a], 0);
    const b0 = core.yMean - slopes.reduce((s, b, j) => s + b * means[j], 0);
    coefficients = [b0, ...slopes];
    covariance = [[interceptVar, ...Cm.map((c) => -c)], ...slopeCov.map((row, a) => [-Cm[a], ...row])];
  } else {
    coefficients = [...slopes];
    covariance = slopeCov.map((row) => [...row]);
  }
  covariance = covariance.map((row) => row.map((c) => c * sigma2));
  const standardErrors = covariance.map((row, a) => Math.sqrt(row[a]));
  const residualSD = Math.sqrt(sigma2);

  const predictiveDistribution = (x: number[]) => ({
    mean: centredPredict(core, x),
    scale: residualSD * Math.sqrt(1 + varianceFactor(core, x)),
    df: dfResidual,
  });

  return {
    coefficients,
    standardErrors,
    residualSD,
    rSquared,
    dfResidual,
    predict: (x: number[]) => centredPredict(core, x),
    predictionInterval(x: number[], level: number) {
      checkLevel(level);
      const { mean, scale, df } = predictiveDistribution(x);
      const half = studentTQuantile((1 + level) / 2, df) * scale;
      return { fit: mean, lower: mean - half, upper: mean + half };
    },
    n,
    intercept,
    ridge,
    residualSS,
    fittedValues,
    residuals,
    leverages: core.leverages,
    effectiveParameters: core.effectiveParameters,
    covariance,
    predictiveDistribution,
  };
}

export interface LeaveOneOutOptions extends LinearFitOptions {
  level?: number; // prediction-interval level, default 0.80 (the planning interval)
  logOutcome?: boolean; // y is log(hours): also report maeHours
}

export interface LeaveOneOutResult {
  predictions: number[];
  lower: number[];
  upper: number[];
  mae: number; // on the scale of y
  coverage: number; // share of held-out y inside their interval
  level: number;
  press: number; // Σ (y_i − ŷ_(i))²
  /** "hat-matrix" = closed-form identities (OLS); "refit" = n explicit refits (ridge; with "gcv" λ is chosen
   * again inside every refit, so the check includes the choice). */
  method: "hat-matrix" | "refit";
  /** With logOutcome: mean |exp(ŷ_(i)) − exp(y_i)|, the error in hours. */
  maeHours?: number;
}

/**
 * Leave-one-out cross-validation. Under OLS it uses the exact identities from one QR:
 * held-out residual e_(i) = e_i / (1 − h_ii)
 * held-out variance s²_(i) = ((n − p)s² − e_i²/(1 − h_ii)) / (n − p − 1)
 * interval ŷ_(i) ± t_{(1+level)/2, n−p−1} · s_(i) / √(1 − h_ii)
 * (the last because x_iᵀ(X_(i)ᵀX_(i))⁻¹x_i = h_ii/(1 − h_ii), Sherman–Morrison; Belsley, Kuh & Welsch 1980).
 * Under ridge those variance identities no longer hold (tr H changes with the row left out), so each record
 * is refitted explicitly: O(n²p²), fine for the small cohorts ridge is meant for.
 */
export function leaveOneOut(X: number[][], y: number[], options?: LeaveOneOutOptions): LeaveOneOutResult {
  const level = options?.level ?? 0.8;
  checkLevel(level);
  const intercept = options?.intercept ?? true;
  const ridge = options?.ridge ?? 0;
  const n = y.length;
  const predictions = new Array<number>(n);
  const lower = new Array<number>(n);
  const upper = new Array<number>(n);
  let method: LeaveOneOutResult["method"];

  if (ridge === 0) {
    method = "hat-matrix";
    const fit = fitLinearModel(X, y, { intercept, ridge });
    const p = fit.coefficients.length;
    const dfHeldOut = n - p - 1;
    if (dfHeldOut < 1) throw new Error(`leave-one-out needs at least ${p + 2} records, got ${n}`);
    const t = studentTQuantile((1 + level) / 2, dfHeldOut);
    const rssTotal = fit.residualSS;
    for (let i = 0; i < n; i++) {
      const oneMinusH = 1 - fit.leverages[i];
      if (!(oneMinusH > 1e-12)) throw new Error(`record ${i} has leverage 1: it cannot be predicted from the others`);
      const e = fit.residuals[i];
      const heldOutResidual = e / oneMinusH;
      predictions[i] = y[i] - heldOutResidual;
      const s2 = Math.max(0, (rssTotal - (e * e) / oneMinusH) / dfHeldOut);
      const half = (t * Math.sqrt(s2)) / Math.sqrt(oneMinusH);
      lower[i] = predictions[i] - half;
      upper[i] = predictions[i] + half;
    }
  } else {
    method = "refit";
    for (let i = 0; i < n; i++) {
      const keepX = X.filter((_, r) => r !== i);
      const keepY = y.filter((_, r) => r !== i);
      const interval = fitLinearModel(keepX, keepY, { intercept, ridge }).predictionInterval(X[i], level);
      predictions[i] = interval.fit;
      lower[i] = interval.lower;
      upper[i] = interval.upper;
    }
  }

  let absSum = 0;
  let press = 0;
  let covered = 0;
  let absHours = 0;
  for (let i = 0; i < n; i++) {
    const d = y[i] - predictions[i];
    absSum += Math.abs(d);
    press += d * d;
    if (y[i] >= lower[i] && y[i] <= upper[i]) covered++;
    if (options?.logOutcome) absHours += Math.abs(Math.exp(predictions[i]) - Math.exp(y[i]));
  }
  const result: LeaveOneOutResult = {
    predictions,
    lower,
    upper,
    mae: absSum / n,
    coverage: covered / n,
    level,
    press,
    method,
  };
  if (options?.logOutcome) result.maeHours = absHours / n;
  return result;
}

export interface GcvChoice {
  /** The λ minimising GCV (0 when ordinary least squares does best). */
  lambda: number;
  gcv: number;
  effectiveParameters: number;
  /** GCV(λ) on the search grid, for display and checks. */
  path: { lambda: number; gcv: number; effectiveParameters: number }[];
}

/**
 * Ridge penalty by generalised cross-validation (Golub, Heath & Wahba 1979, Technometrics 21:215–223):
 * minimise GCV(λ) = n·RSS(λ) / (n − tr H(λ))² over λ ≥ 0. Same penalty as fitLinearModel (intercept not
 * penalised, X as given). Through the SVD of the centred X = UDVᵀ, with c = Uᵀy_c and s_j = d_j²/(d_j² + λ):
 * RSS(λ) = ‖y_c‖² − Σc_j² + Σ c_j²(1 − s_j)², tr H = [1] + Σ s_j. The grid runs over λ = d_max²·10^(−8…2)
 * (121 points, plus λ = 0) and the best point is refined by golden-section search on log λ.
 */
export function ridgeByGcv(X: number[][], y: number[], options?: { intercept?: boolean }): GcvChoice {
  const k = validate(X, y);
  const n = y.length;
  const intercept = options?.intercept ?? true;
  const yMean = intercept ? accurateMean(y) : 0;
  const means = Array.from({ length: k }, (_, j) => (intercept ? accurateMean(X.map((r) => r[j])) : 0));
  const Xc = new Matrix(X.map((r) => r.map((v, j) => v - means[j])));
  const yc = y.map((v) => v - yMean);
  const svd = new SingularValueDecomposition(Xc, { autoTranspose: true });
  const d = svd.diagonal;
  const U = svd.leftSingularVectors;
  const c = d.map((_, j) => {
    let sum = 0;
    for (let i = 0; i < n; i++) sum += U.get(i, j) * yc[i];
    return sum;
  });
  const yy = yc.reduce((sum, v) => sum + v * v, 0);
  const outside = Math.max(0, yy - c.reduce((sum, v) => sum + v * v, 0));
  const dMax2 = Math.max(...d.map((v) => v * v));
  if (!(dMax2 > 0)) throw new Error("every measure is constant; there is nothing to fit");
  const at = (lambda: number) => {
    let rss = outside;
    let trace = intercept ? 1 : 0;
    for (let j = 0; j < d.length; j++) {
      const d2 = d[j] * d[j];
      const shrink = d2 + lambda > 0 ? d2 / (d2 + lambda) : 0;
      rss += c[j] * c[j] * (1 - shrink) ** 2;
      trace += shrink;
    }
    const gcv = n - trace > 0 ? (n * rss) / (n - trace) ** 2 : Infinity;
    return { lambda, gcv, effectiveParameters: trace };
  };
  const path = [at(0)];
  for (let i = 0; i <= 120; i++) path.push(at(dMax2 * 10 ** (-8 + i / 12)));
  let best = 0;
  for (let i = 1; i < path.length; i++) if (path[i].gcv < path[best].gcv) best = i;
  let choice = path[best];
  if (best >= 1 && Number.isFinite(choice.gcv)) {
    // Golden-section on log λ between the neighbouring grid points.
    let lo = Math.log(path[Math.max(1, best - 1)].lambda);
    let hi = Math.log(path[Math.min(path.length - 1, best + 1)].lambda);
    const g = (Math.sqrt(5) - 1) / 2;
    for (let it = 0; it < 60; it++) {
      const m1 = hi - g * (hi - lo);
      const m2 = lo + g * (hi - lo);
      if (at(Math.exp(m1)).gcv < at(Math.exp(m2)).gcv) hi = m2;
      else lo = m1;
    }
    const refined = at(Math.exp((lo + hi) / 2));
    if (refined.gcv < choice.gcv) choice = refined;
  }
  return { ...choice, path };
}

export interface PlannedHours {
  /** exp(fit): the median hours, since the log-scale predictive distribution is symmetric. */
  medianHours: number;
  /** exp(fit + t_{q,df}·scale): the planning figure, so plans run short only (1 − q) of the time. */
  planningHours: number;
  quantile: number;
  /** Central interval in hours, exp of the log-scale prediction interval. */
  lowerHours: number;
  upperHours: number;
  level: number;
  logFit: number;
  logScale: number;
  df: number;
}

/** Hours figures from a log-scale predictive distribution mean + scale·t(df). */
export function plannedHoursFromLogScale(
  logFit: number,
  logScale: number,
  df: number,
  options?: { quantile?: number; level?: number },
): PlannedHours {
  const quantile = options?.quantile ?? 0.8;
  const level = options?.level ?? 0.8;
  checkLevel(level);
  if (!(quantile > 0 && quantile < 1)) throw new RangeError(`quantile must be in (0, 1), got ${quantile}`);
  const half = studentTQuantile((1 + level) / 2, df) * logScale;
  return {
    medianHours: Math.exp(logFit),
    planningHours: Math.exp(logFit + studentTQuantile(quantile, df) * logScale),
    quantile,
    lowerHours: Math.exp(logFit - half),
    upperHours: Math.exp(logFit + half),
    level,
    logFit,
    logScale,
    df,
  };
}

/**
 * Planning hours for one worker from a model of log(hours). Uses only the LinearFit contract: the
 * predictive scale is recovered from the interval's half-width divided by its t quantile.
 */
export function plannedHours(
  fit: LinearFit,
  x: number[],
  options?: { quantile?: number /* 0.80 */; level?: number /* 0.80 */ },
): PlannedHours {
  const level = options?.level ?? 0.8;
  checkLevel(level);
  const interval = fit.predictionInterval(x, level);
  const scale = (interval.upper - interval.lower) / (2 * studentTQuantile((1 + level) / 2, fit.dfResidual));
  return plannedHoursFromLogScale(interval.fit, scale, fit.dfResidual, { ...options, level });
}

export interface ColumnStandardizer {
  means: number[];
  sds: number[]; // sample SD (n − 1)
  apply(row: number[]): number[];
}

/** Column means and sample SDs of X, and a function turning a row into z-scores with them. */
export function columnStandardizer(X: number[][]): ColumnStandardizer {
  const n = X.length;
  if (n < 2) throw new Error("need at least two rows to standardise");
  const k = X[0].length;
  const means: number[] = [];
  const sds: number[] = [];
  for (let j = 0; j < k; j++) {
    const col = X.map((row) => row[j]);
    const m = accurateMean(col);
    const sd = Math.sqrt(col.reduce((s, v) => s + (v - m) ** 2, 0) / (n - 1));
    if (!(sd > 0)) throw new Error(`measure ${j} is constant and cannot be standardised`);
    means.push(m);
    sds.push(sd);
  }
  return { means, sds, apply: (row) => row.map((v, j) => (v - means[j]) / sds[j]) };
}

/** Standardise every column of X (z-scores with the sample SD). */
export function standardize(X: number[][]): { Z: number[][]; means: number[]; sds: number[] } {
  const s = columnStandardizer(X);
  return { Z: X.map((row) => s.apply(row)), means: s.means, sds: s.sds };
}

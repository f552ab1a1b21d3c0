// Progress curve (docs/methods.md): task score against cumulative practice hours,
// score = asymptote − (asymptote − start) · exp(−rate · hours),
// fitted by Levenberg–Marquardt. With fixStart = 0 this is y = a(1 − e^(−c·x)), NIST StRD "Misra1a".
//
// The solver is our own small LM on ml-matrix: each step solves the damped problem
// min ‖r − Jδ‖² + μ‖Dδ‖² as an augmented least-squares problem by QR (never JᵀJ directly), with Moré's
// column scaling D (so a ≈ 10² and c ≈ 10⁻⁴ are treated alike) and Nielsen's damping update.
// Starting values come from the curve's separable structure: for a fixed rate the model is linear in
// asymptote and start, so a coarse log-spaced scan over the rate with a linear fit at each point gives
// a start near the global minimum (variable projection, Golub & Pereyra 1973).

import { Matrix, QrDecomposition } from "ml-matrix";

export interface SaturatingExponentialOptions {
  fixStart?: number;
  initial?: { asymptote: number; start?: number; rate: number };
  maxIterations?: number; // default 500
}

export interface SaturatingExponentialFit {
  asymptote: number;
  start: number;
  rate: number;
  standardErrors: { asymptote: number; start?: number; rate: number };
  residualSS: number;
  converged: boolean;
  iterations: number;
  // --- extensions beyond the public contract (docs/methods.md) ---
  n: number;
  dfResidual: number;
  residualSD: number;
  /** Whether `start` was held fixed (then it has no standard error or covariance row). */
  startFixed: boolean;
  /** Names in the order of `covariance`: ["asymptote", "start", "rate"] or ["asymptote", "rate"]. */
  parameterNames: string[];
  /** Covariance of the estimates, (JᵀJ)⁻¹ · RSS/(n − p); NaN when n ≤ p. */
  covariance: number[][];
}

/** The curve's value at `hours` cumulative practice. */
export function curveScore(fit: { asymptote: number; start: number; rate: number }, hours: number): number {
  return fit.asymptote - (fit.asymptote - fit.start) * Math.exp(-fit.rate * hours);
}

interface Model {
  /** Parameter vector θ → (asymptote, start, rate). */
  unpack(theta: number[]): { a: number; s: number; c: number };
  residuals(theta: number[], out: Float64Array): void;
  jacobian(theta: number[], J: Matrix): void;
}

function buildModel(x: number[], y: number[], fixedStart: number | undefined): Model {
  const n = x.length;
  const free = fixedStart === undefined;
  const unpack = (t: number[]) =>
    free ? { a: t[0], s: t[1], c: t[2] } : { a: t[0], s: fixedStart as number, c: t[1] };
  return {
    unpack,
    residuals(theta, out) {
      const { a, s, c } = unpack(theta);
      for (let i = 0; i < n; i++) out[i] = y[i] - (a - (a - s) * Math.exp(-c * x[i]));
    },
    jacobian(theta, J) {
      // Derivatives of the model value (not the residual).
      const { a, s, c } = unpack(theta);
      for (let i = 0; i < n; i++) {
        const e = Math.exp(-c * x[i]);
        J.set(i, 0, 1 - e);
        if (free) J.set(i, 1, e);
        J.set(i, free ? 2 : 1, (a - s) * x[i] * e);
      }
    },
  };
}

function sumSquares(v: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i] * v[i];
  return s;
}

/** Linear least squares for (asymptote, start) at a fixed rate; returns RSS and the estimates. */
function profileAtRate(x: number[], y: number[], rate: number, fixedStart: number | undefined) {
  const n = x.length;
  if (fixedStart !== undefined) {
    // y − s₀ = A·u with u = 1 − e^(−c x), A = a − s₀.
    let uu = 0;
    let uy = 0;
    for (let i = 0; i < n; i++) {
      const u = 1 - Math.exp(-rate * x[i]);
      uu += u * u;
      uy += u * (y[i] - fixedStart);
    }
    if (!(uu > 0)) return null;
    const a = fixedStart + uy / uu;
    let rss = 0;
    for (let i = 0; i < n; i++) rss += (y[i] - (a - (a - fixedStart) * Math.exp(-rate * x[i]))) ** 2;
    return { a, s: fixedStart, rss };
  }
  // y = a·u + s·(1 − u): two-column least squares via QR.
  const A = new Matrix(n, 2);
  const b = new Matrix(n, 1);
  for (let i = 0; i < n; i++) {
    const e = Math.exp(-rate * x[i]);
    A.set(i, 0, 1 - e);
    A.set(i, 1, e);
    b.set(i, 0, y[i]);
  }
  const qr = new QrDecomposition(A);
  const R = qr.upperTriangularMatrix;
  if (!(Math.abs(R.get(1, 1)) > 1e-12 * Math.abs(R.get(0, 0)))) return null;
  const sol = qr.solve(b);
  const a = sol.get(0, 0);
  const s = sol.get(1, 0);
  let rss = 0;
  for (let i = 0; i < n; i++) rss += (y[i] - (a - (a - s) * Math.exp(-rate * x[i]))) ** 2;
  return { a, s, rss };
}

/** Automatic start values: scan rates 10⁻²…10² per span of hours, linear fit at each, keep the best. */
export function automaticStart(
  x: number[],
  y: number[],
  fixStart?: number,
): { asymptote: number; start: number; rate: number } {
  const span = Math.max(...x.map(Math.abs));
  const unit = span > 0 ? 1 / span : 1;
  let best: { a: number; s: number; c: number; rss: number } | null = null;
  const steps = 81;
  for (let k = 0; k < steps; k++) {
    const c = unit * 10 ** (-2 + (4 * k) / (steps - 1));
    const p = profileAtRate(x, y, c, fixStart);
    if (p && Number.isFinite(p.rss) && (!best || p.rss < best.rss)) best = { ...p, c };
  }
  if (!best) {
    // Degenerate data (e.g. all hours equal): a flat curve at the mean score.
    const mean = y.reduce((s, v) => s + v, 0) / y.length;
    return { asymptote: mean, start: fixStart ?? mean, rate: unit };
  }
  return { asymptote: best.a, start: best.s, rate: best.c };
}

/** Fit the saturating-exponential progress curve by Levenberg–Marquardt. */
export function fitSaturatingExponential(
  x: number[],
  y: number[],
  options?: {
    fixStart?: number;
    initial?: { asymptote: number; start?: number; rate: number };
    maxIterations?: number;
  },
): SaturatingExponentialFit {
  const n = x.length;
  if (y.length !== n) throw new Error(`x has ${n} values but y has ${y.length}`);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) throw new Error(`session ${i} has a non-finite value`);
  }
  const fixedStart = options?.fixStart;
  const free = fixedStart === undefined;
  const p = free ? 3 : 2;
  if (n < p) throw new Error(`need at least ${p} sessions to fit ${p} curve parameters, got ${n}`);
  const maxIterations = options?.maxIterations ?? 500;

  const init = options?.initial ?? automaticStart(x, y, fixedStart);
  const startGuess = init.start ?? (free ? automaticStart(x, y).start : (fixedStart as number));
  let theta = free ? [init.asymptote, startGuess, init.rate] : [init.asymptote, init.rate];

  const model = buildModel(x, y, fixedStart);
  const r = new Float64Array(n);
  const rTrial = new Float64Array(n);
  const J = new Matrix(n, p);
  model.residuals(theta, r);
  let rss = sumSquares(r);
  let mu = 1e-3;
  let nu = 2;
  const D = new Array<number>(p).fill(0);
  let converged = false;
  let iterations = 0;
  let needJacobian = true;
  const g = new Array<number>(p).fill(0);
  const colNorm = new Array<number>(p).fill(0);

  while (iterations < maxIterations) {
    iterations++;
    if (needJacobian) {
      model.jacobian(theta, J);
      for (let j = 0; j < p; j++) {
        let norm = 0;
        let gj = 0;
        for (let i = 0; i < n; i++) {
          norm += J.get(i, j) ** 2;
          gj += J.get(i, j) * r[i];
        }
        colNorm[j] = Math.sqrt(norm);
        g[j] = gj;
        D[j] = Math.max(D[j], colNorm[j]); // Moré (1978): scaling never shrinks
      }
      needJacobian = false;
      // Gradient test: cosine between the residual and each Jacobian column (MINPACK's gtol).
      const rNorm = Math.sqrt(rss);
      let cosine = 0;
      for (let j = 0; j < p; j++) {
        if (colNorm[j] > 0 && rNorm > 0) cosine = Math.max(cosine, Math.abs(g[j]) / (colNorm[j] * rNorm));
      }
      if (rss === 0 || cosine <= 1e-13) {
        converged = true;
        break;
      }
    }
    // Damped step: least squares on [J; √μ·D] against [r; 0].
    const A = new Matrix(n + p, p);
    const b = new Matrix(n + p, 1);
    for (let i = 0; i < n; i++) {
      for (let j = 0; j < p; j++) A.set(i, j, J.get(i, j));
      b.set(i, 0, r[i]);
    }
    const rootMu = Math.sqrt(mu);
    for (let j = 0; j < p; j++) A.set(n + j, j, rootMu * (D[j] > 0 ? D[j] : 1));
    const qr = new QrDecomposition(A);
    if (!qr.isFullRank()) {
      mu *= nu;
      nu *= 2;
      continue;
    }
    const step = qr.solve(b).to1DArray();
    const trial = theta.map((t, j) => t + step[j]);
    model.residuals(trial, rTrial);
    const rssTrial = sumSquares(rTrial);
    // Predicted reduction of the linearised model, ‖r‖² − ‖r − Jδ‖².
    let linearised = 0;
    for (let i = 0; i < n; i++) {
      let jd = 0;
      for (let j = 0; j < p; j++) jd += J.get(i, j) * step[j];
      linearised += (r[i] - jd) ** 2;
    }
    const predicted = rss - linearised;
    const actual = rss - rssTrial;
    let relativeStep = 0;
    for (let j = 0; j < p; j++) {
      relativeStep = Math.max(relativeStep, Math.abs(step[j]) / (Math.abs(theta[j]) + 1e-300));
    }
    if (Number.isFinite(rssTrial) && actual > 0 && predicted > 0) {
      const rho = actual / predicted;
      theta = trial;
      r.set(rTrial);
      rss = rssTrial;
      mu *= Math.max(1 / 3, 1 - (2 * rho - 1) ** 3); // Nielsen (1999)
      nu = 2;
      needJacobian = true;
      if (relativeStep <= 1e-14 || actual <= 1e-15 * rss) {
        converged = true;
        break;
      }
    } else {
      // A step that no longer changes anything means we are at the minimum to working precision.
      if (relativeStep <= 1e-15) {
        converged = true;
        break;
      }
      mu *= nu;
      nu *= 2;
      if (!Number.isFinite(mu) || mu > 1e300) break;
    }
  }

  // Standard errors from the Jacobian at the solution: √(diag((JᵀJ)⁻¹) · RSS/(n − p)), via QR of J.
  model.jacobian(theta, J);
  const dfResidual = n - p;
  const sigma2 = dfResidual > 0 ? rss / dfResidual : NaN;
  const covariance = unscaledCovariance(J).map((row) => row.map((v) => v * sigma2));
  const se = covariance.map((row, j) => Math.sqrt(row[j]));
  const { a, s, c } = model.unpack(theta);

  return {
    asymptote: a,
    start: s,
    rate: c,
    standardErrors: free ? { asymptote: se[0], start: se[1], rate: se[2] } : { asymptote: se[0], rate: se[1] },
    residualSS: rss,
    converged,
    iterations,
    n,
    dfResidual,
    residualSD: Math.sqrt(sigma2),
    startFixed: !free,
    parameterNames: free ? ["asymptote", "start", "rate"] : ["asymptote", "rate"],
    covariance,
  };
}

/** (JᵀJ)⁻¹ = R⁻¹R⁻ᵀ from the QR of J; NaN-filled if J is rank deficient. */
function unscaledCovariance(J: Matrix): number[][] {
  const p = J.columns;
  const nanMatrix = () => Array.from({ length: p }, () => new Array<number>(p).fill(NaN));
  if (J.rows < p) return nanMatrix();
  const qr = new QrDecomposition(J);
  if (!qr.isFullRank()) return nanMatrix();
  const R = qr.upperTriangularMatrix;
  const Rinv: number[][] = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let col = 0; col < p; col++) {
    for (let i = col; i >= 0; i--) {
      let sum = i === col ? 1 : 0;
      for (let j = i + 1; j <= col; j++) sum -= R.get(i, j) * Rinv[j][col];
      Rinv[i][col] = sum / R.get(i, i);
    }
  }
  return Array.from({ length: p }, (_, i) =>
    Array.from({ length: p }, (_, j) => {
      let sum = 0;
      for (let k = 0; k < p; k++) sum += Rinv[i][k] * Rinv[j][k];
      return sum;
    }),
  );
}

type CurveParameters = { asymptote: number; start: number; rate: number };

/**
 * Cumulative hours at which the curve reaches `threshold`:
 * t = ln((asymptote − start) / (asymptote − threshold)) / rate.
 * null when the curve never gets there (asymptote not above the threshold, or rate ≤ 0);
 * 0 when it already starts at or above the threshold.
 */
export function timeToReach(fit: CurveParameters, threshold: number): number | null {
  const { asymptote, start, rate } = fit;
  if (!(rate > 0) || !(asymptote > threshold)) return null;
  if (start >= threshold) return 0;
  return Math.log((asymptote - start) / (asymptote - threshold)) / rate;
}

/**
 * Time to reach with its delta-method standard deviation, Var(t) ≈ ∇tᵀ Σ ∇t (Casella & Berger 2002, §5.5.4),
 * using the fit's parameter covariance. Gradient of t = ln((a − s)/(a − T))/c:
 * ∂t/∂a = (1/(a − s) − 1/(a − T))/c, ∂t/∂s = −1/((a − s)c), ∂t/∂c = −t/c.
 */
export function timeToReachWithUncertainty(
  fit: SaturatingExponentialFit,
  threshold: number,
): { hours: number; sd: number } | null {
  const hours = timeToReach(fit, threshold);
  if (hours === null) return null;
  if (hours === 0) return { hours: 0, sd: 0 };
  const { asymptote: a, start: s, rate: c } = fit;
  const gradA = (1 / (a - s) - 1 / (a - threshold)) / c;
  const gradS = -1 / ((a - s) * c);
  const gradC = -hours / c;
  const grad = fit.startFixed ? [gradA, gradC] : [gradA, gradS, gradC];
  let variance = 0;
  for (let i = 0; i < grad.length; i++) {
    for (let j = 0; j < grad.length; j++) variance += grad[i] * fit.covariance[i][j] * grad[j];
  }
  return { hours, sd: Math.sqrt(variance) };
}

/**
 * Plateau below criterion: the curve's asymptote is confidently under the threshold, taken as
 * asymptote + z·SE(asymptote) < threshold with z = 2 by default (about a one-sided 97.7 % bound under
 * normality). Such a trainee is flagged for review; the curve is never extrapolated past its plateau.
 */
export function plateausBelowCriterion(fit: SaturatingExponentialFit, threshold: number, z = 2): boolean {
  const se = fit.standardErrors.asymptote;
  if (!Number.isFinite(se)) return fit.asymptote < threshold;
  return fit.asymptote + z * se < threshold;
}

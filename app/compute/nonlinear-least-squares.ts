// Nonlinear least squares by Levenberg–Marquardt, shared by the progress curves (curve.ts).
//
// Our own small LM on ml-matrix: each step solves the damped problem min ‖r − Jδ‖² + μ‖Dδ‖² as an
// augmented least-squares problem by QR (never JᵀJ directly), with Moré's column scaling D (so a ≈ 10² and
// c ≈ 10⁻⁴ are treated alike) and Nielsen's damping update. Standard errors come from the Jacobian at the
// solution, √(diag((JᵀJ)⁻¹) · RSS/(n − p)), through the QR of J.

import { Matrix, QrDecomposition } from "ml-matrix";

export interface LeastSquaresModel {
  /** Observations. */
  n: number;
  /** Free parameters. */
  p: number;
  /** out[i] = y[i] − model(θ, x[i]). */
  residuals(theta: number[], out: Float64Array): void;
  /** J[i][j] = ∂model(θ, x[i]) / ∂θ[j] (of the model value, not the residual). */
  jacobian(theta: number[], J: Matrix): void;
}

export interface LeastSquaresSolution {
  theta: number[];
  residualSS: number;
  converged: boolean;
  iterations: number;
  dfResidual: number;
  /** Covariance of the estimates, (JᵀJ)⁻¹ · RSS/(n − p); NaN when n ≤ p or J is rank deficient. */
  covariance: number[][];
}

function sumSquares(v: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < v.length; i++) s += v[i] * v[i];
  return s;
}

export function levenbergMarquardt(
  model: LeastSquaresModel,
  initial: number[],
  maxIterations = 500,
): LeastSquaresSolution {
  const { n, p } = model;
  let theta = [...initial];
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

  model.jacobian(theta, J);
  const dfResidual = n - p;
  const sigma2 = dfResidual > 0 ? rss / dfResidual : NaN;
  const covariance = unscaledCovariance(J).map((row) => row.map((v) => v * sigma2));
  return { theta, residualSS: rss, converged, iterations, dfResidual, covariance };
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

// Hand dimensionality: how many independent movement patterns (synergies) explain the joint angles
// an instrumented glove records. PCA on the covariance of centred data.
import { symmetricEigenvaluesDescending } from "./symmetric-eigenvalues";

export interface HandDimensionality {
  /** Share of total variance per principal component, largest first (sums to 1). */
  explainedVarianceRatio: number[];
  /** Fewest components whose cumulative share reaches the threshold. */
  componentsToThreshold: number;
  /** (Σλ)² / Σλ²: an "effective number" of components, 1 … number of joints. */
  participationRatio: number;
}

/** Cumulative shares are compared with this slack so that e.g. 0.9 reached as 0.8999999999999 counts. */
const THRESHOLD_SLACK = 1e-12;

export function handDimensionality(samples: number[][], threshold = 0.9): HandDimensionality {
  if (typeof threshold !== "number" || !(threshold > 0 && threshold <= 1)) {
    throw new RangeError(`threshold must be in (0, 1] (got ${String(threshold)})`);
  }
  if (!Array.isArray(samples) || samples.length < 2) {
    throw new RangeError(
      `hand dimensionality needs at least 2 samples (got ${Array.isArray(samples) ? samples.length : 0})`,
    );
  }
  const n = samples.length;
  const p = Array.isArray(samples[0]) ? samples[0].length : 0;
  if (p < 1) throw new RangeError("samples[0] has no joint columns");

  // Copy into one flat typed array while checking shape and values (one pass, cache friendly).
  const data = new Float64Array(n * p);
  const means = new Float64Array(p);
  for (let r = 0; r < n; r++) {
    const row = samples[r];
    if (!Array.isArray(row) || row.length !== p) {
      throw new RangeError(`samples[${r}] has ${Array.isArray(row) ? row.length : 0} columns, expected ${p}`);
    }
    for (let c = 0; c < p; c++) {
      const v = row[c];
      if (typeof v !== "number" || !Number.isFinite(v)) {
        throw new RangeError(`samples[${r}][${c}] is not a finite number (got ${String(v)})`);
      }
      data[r * p + c] = v;
      means[c] += v;
    }
  }
  for (let c = 0; c < p; c++) means[c] /= n;

  // Build the p × p covariance directly (n·p²/2 work) instead of decomposing the n × p data matrix:
  // 60,000 × 22 glove recordings stay far below a second this way.
  const upper = new Float64Array(p * p);
  const centred = new Float64Array(p);
  for (let r = 0; r < n; r++) {
    const base = r * p;
    for (let c = 0; c < p; c++) centred[c] = data[base + c] - means[c];
    for (let i = 0; i < p; i++) {
      const ci = centred[i];
      if (ci === 0) continue;
      const rowOffset = i * p;
      for (let j = i; j < p; j++) upper[rowOffset + j] += ci * centred[j];
    }
  }
  const covariance: number[][] = [];
  for (let i = 0; i < p; i++) {
    const row = new Array<number>(p);
    for (let j = 0; j < p; j++) row[j] = (i <= j ? upper[i * p + j] : upper[j * p + i]) / (n - 1);
    covariance.push(row);
  }

  const eigenvalues = symmetricEigenvaluesDescending(covariance);
  const total = eigenvalues.reduce((s, v) => s + v, 0);
  if (!(total > 0)) throw new RangeError("joint angles do not vary, so hand dimensionality is undefined");

  const explainedVarianceRatio = eigenvalues.map((v) => v / total);
  let cumulative = 0;
  let componentsToThreshold = explainedVarianceRatio.length;
  for (let k = 0; k < explainedVarianceRatio.length; k++) {
    cumulative += explainedVarianceRatio[k];
    if (cumulative >= threshold - THRESHOLD_SLACK) {
      componentsToThreshold = k + 1;
      break;
    }
  }
  const sumOfSquares = eigenvalues.reduce((s, v) => s + v * v, 0);
  return { explainedVarianceRatio, componentsToThreshold, participationRatio: (total * total) / sumOfSquares };
}

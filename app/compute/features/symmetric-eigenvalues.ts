// Eigenvalues of a symmetric (covariance) matrix, largest first, via ml-matrix.
import { EigenvalueDecomposition, Matrix } from "ml-matrix";

/**
 * Eigenvalues of a symmetric matrix sorted descending. Tiny negative values that come from
 * rounding (a covariance matrix is positive semi-definite) are clamped to 0.
 */
export function symmetricEigenvaluesDescending(covariance: number[][]): number[] {
  const decomposition = new EigenvalueDecomposition(new Matrix(covariance), { assumeSymmetric: true });
  // biome-ignore lint/complexity/useMathMinMax: the comparison also turns a NaN into 0; Math.max would pass it on.
  return decomposition.realEigenvalues.map((v) => (v > 0 ? v : 0)).sort((a, b) => b - a);
}

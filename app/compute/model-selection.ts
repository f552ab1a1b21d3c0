// Model selection by Akaike's information criterion with the small-sample correction
// (Burnham & Anderson 2002, Model Selection and Multimodel Inference, 2nd ed., ch. 2).

/**
 * AIC of a least-squares fit with normal errors: n·ln(RSS/n) + 2K, K counting every estimated parameter
 * including the residual variance (constants common to all models on the same data dropped).
 */
export function leastSquaresAic(residualSS: number, n: number, K: number): number {
  if (!(residualSS > 0)) throw new RangeError(`residual sum of squares must be > 0, got ${residualSS}`);
  if (!Number.isInteger(n) || n < 1) throw new RangeError(`n must be a whole number ≥ 1, got ${n}`);
  if (!Number.isInteger(K) || K < 1) throw new RangeError(`K must be a whole number ≥ 1, got ${K}`);
  return n * Math.log(residualSS / n) + 2 * K;
}

/** AICc = AIC + 2K(K + 1)/(n − K − 1); defined for n > K + 1. */
export function aicc(aic: number, n: number, K: number): number {
  if (!(n > K + 1)) throw new RangeError(`AICc needs n > K + 1 (n = ${n}, K = ${K})`);
  return aic + (2 * K * (K + 1)) / (n - K - 1);
}

/** Akaike weights exp(−Δᵢ/2) / Σ exp(−Δⱼ/2), Δᵢ = criterionᵢ − min. */
export function akaikeWeights(criteria: number[]): number[] {
  if (criteria.length === 0) throw new RangeError("no criteria to weigh");
  const min = Math.min(...criteria);
  const raw = criteria.map((c) => Math.exp(-(c - min) / 2));
  const total = raw.reduce((s, v) => s + v, 0);
  return raw.map((v) => v / total);
}

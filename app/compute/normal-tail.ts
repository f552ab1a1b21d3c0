// Logarithms of the standard normal density and upper tail, accurate far into the tail.
//
// log(1 − Φ(z)) computed as log(1 − normalCdf(z)) loses every digit once Φ(z) rounds to 1 (z ≳ 8), and
// jStat's erfc is 1 − erf, which cancels well before that. Censored likelihoods need the tail at any z,
// so the upper tail is computed here from the complementary error function in logarithmic form:
// 1 − Φ(z) = ½·erfc(z/√2), with erfc(x) = t·exp(−x² + P(t)) for x ≥ 0, t = 2/(2 + x) and P a Chebyshev
// series (Numerical Recipes, 3rd ed., 2007, §6.2.2 "erfccheb"; relative accuracy about 1e-16). Keeping
// the exponent apart means log erfc never underflows, and φ(z)/(1 − Φ(z)) (the inverse Mills ratio) is
// computed as a difference of logarithms.

const LOG_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

// Chebyshev coefficients of erfccheb (Numerical Recipes, 3rd ed., §6.2.2).
const ERFC_COEFFICIENTS = [
  -1.3026537197817094, 0.6419697923564902, 1.9476473204185836e-2, -9.561514786808631e-3, -9.46595344482036e-4,
  3.66839497852761e-4, 4.2523324806907e-5, -2.0278578112534e-5, -1.624290004647e-6, 1.30365583558e-6, 1.5626441722e-8,
  -8.5238095915e-8, 6.529054439e-9, 5.059343495e-9, -9.91364156e-10, -2.27365122e-10, 9.6467911e-11, 2.394038e-12,
  -6.886027e-12, 8.94487e-13, 3.13092e-13, -1.12708e-13, 3.81e-16, 7.106e-15, -1.523e-15, -9.4e-17, 1.21e-16, -2.8e-17,
];

/** log erfc(x) for x ≥ 0, without underflow. */
function logErfcNonNegative(x: number): number {
  const t = 2 / (2 + x);
  const ty = 4 * t - 2;
  let d = 0;
  let dd = 0;
  for (let j = ERFC_COEFFICIENTS.length - 1; j > 0; j--) {
    const previous = d;
    d = ty * d - dd + ERFC_COEFFICIENTS[j];
    dd = previous;
  }
  return Math.log(t) - x * x + 0.5 * (ERFC_COEFFICIENTS[0] + ty * d) - dd;
}

/** log φ(z), the standard normal log density. */
export function normalLogDensity(z: number): number {
  return -0.5 * z * z - LOG_SQRT_2PI;
}

/** log(1 − Φ(z)), the standard normal log upper tail, accurate for every finite z. */
export function normalLogUpperTail(z: number): number {
  if (Number.isNaN(z)) return Number.NaN;
  if (z === Number.POSITIVE_INFINITY) return Number.NEGATIVE_INFINITY;
  if (z >= 0) return logErfcNonNegative(z / Math.SQRT2) - Math.LN2;
  // For z < 0, 1 − Φ(z) = 1 − ½·erfc(|z|/√2) lies in (½, 1]: log1p keeps the small subtracted part.
  if (z === Number.NEGATIVE_INFINITY) return 0;
  return Math.log1p(-0.5 * Math.exp(logErfcNonNegative(-z / Math.SQRT2)));
}

/** The inverse Mills ratio φ(z) / (1 − Φ(z)): the hazard of the standard normal. */
export function normalHazard(z: number): number {
  return Math.exp(normalLogDensity(z) - normalLogUpperTail(z));
}

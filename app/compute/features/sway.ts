// Postural sway from centre-of-pressure (CoP) traces.
// Method: Schubert & Kirchner (2014), Gait & Posture 39:518–522 — the 95 % *prediction* ellipse
// area is π · χ²(0.95, 2) · √(λ1 λ2), with λ the eigenvalues of the sample covariance (n − 1).
import { assertFiniteSeries, assertMinimumLength, assertSameLength, assertSampleRate, mean } from "./input-checks";
import { symmetricEigenvaluesDescending } from "./symmetric-eigenvalues";

/** χ² quantile at 0.95 with 2 degrees of freedom (= −2 ln 0.05). */
export const CHI_SQUARE_95_2DF = 5.991464547;

export interface SwayMetrics {
  /** Sum of distances between successive CoP samples (mm). */
  pathLength: number;
  /** Path length divided by the recording duration (n − 1)/fs (mm/s). */
  meanVelocity: number;
  /** Root-mean-square distance of the samples from the mean CoP point (mm). */
  rmsDistance: number;
  /** Area of the 95 % prediction ellipse (mm²). */
  ellipseArea95: number;
}

export function swayMetrics(x: number[], y: number[], sampleRateHz: number): SwayMetrics {
  assertSameLength(x, y, "x", "y");
  // Three points are the fewest for which a covariance ellipse is not degenerate by construction.
  assertMinimumLength(x, 3, "sway trace");
  assertFiniteSeries(x, "x");
  assertFiniteSeries(y, "y");
  assertSampleRate(sampleRateHz);

  const n = x.length;
  let pathLength = 0;
  for (let i = 1; i < n; i++) pathLength += Math.hypot(x[i] - x[i - 1], y[i] - y[i - 1]);
  const durationSeconds = (n - 1) / sampleRateHz;

  // Two-pass (centred) sums: CoP coordinates often sit far from 0, so the one-pass formula loses digits.
  const mx = mean(x);
  const my = mean(y);
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const dx = x[i] - mx;
    const dy = y[i] - my;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  const covariance = [
    [sxx / (n - 1), sxy / (n - 1)],
    [sxy / (n - 1), syy / (n - 1)],
  ];
  const [lambda1, lambda2] = symmetricEigenvaluesDescending(covariance);

  return {
    pathLength,
    meanVelocity: pathLength / durationSeconds,
    rmsDistance: Math.sqrt((sxx + syy) / n),
    ellipseArea95: Math.PI * CHI_SQUARE_95_2DF * Math.sqrt(lambda1 * lambda2),
  };
}

// Force grading: can the worker produce requested force levels (e.g. % of maximum, or newtons)?
import { assertFiniteSeries, assertMinimumLength, assertSameLength, mean } from "./input-checks";

export interface ForceGrading {
  /** Root-mean-square of produced − target (target's unit). */
  rmse: number;
  /** OLS slope of produced on target; 1 means the levels are scaled correctly. */
  slope: number;
  /** Coefficient of determination of that fit. */
  rSquared: number;
}

export function forceGrading(targets: number[], produced: number[]): ForceGrading {
  assertSameLength(targets, produced, "targets", "produced");
  // Three trials are the fewest for which R² is not 1 by construction.
  assertMinimumLength(targets, 3, "force trials");
  assertFiniteSeries(targets, "targets");
  assertFiniteSeries(produced, "produced");

  const n = targets.length;
  const mx = mean(targets);
  const my = mean(produced);
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  let squaredError = 0;
  for (let i = 0; i < n; i++) {
    const dx = targets[i] - mx;
    const dy = produced[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
    squaredError += (produced[i] - targets[i]) ** 2;
  }
  if (!(sxx > 0)) throw new RangeError("targets are all the same level, so a grading slope is undefined");
  const slope = sxy / sxx;
  // Residual SS of the OLS line = Syy − Sxy²/Sxx; produced all equal (Syy = 0) leaves R² undefined.
  if (!(syy > 0)) throw new RangeError("produced levels are all the same, so R² is undefined");
  const residualSS = Math.max(0, syy - slope * sxy);
  return { rmse: Math.sqrt(squaredError / n), slope, rSquared: 1 - residualSS / syy };
}

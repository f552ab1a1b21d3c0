import { describe, expect, it } from "vitest";
import { forecastFromModel, logPredictive } from "~/compute/forecast-explain";
import { fitLinearModel } from "~/compute/regression";

// A stored model version must give the same predictive distribution as the textbook formula for a new
// observation in simple linear regression: Var(y₀ − ŷ₀) = s²(1 + 1/n + (x₀ − x̄)²/Sxx)
// (Montgomery, Peck & Vining, Introduction to Linear Regression Analysis, 5th ed., §2.4.2).
// Data worked by hand: x = 1…5, y = 1 2 2 3 5 → x̄ = 3, Sxx = 10, Sxy = 9, b₁ = 0.9, b₀ = −0.1,
// residuals 0.2 0.3 −0.6 −0.5 0.6, RSS = 1.10, s² = 1.10/3.
const x = [1, 2, 3, 4, 5];
const y = [1, 2, 2, 3, 5];
const fit = fitLinearModel(
  x.map((v) => [v]),
  y,
);
const stored = {
  coefficients: fit.coefficients,
  covariance: fit.covariance,
  residualSD: fit.residualSD,
  dfResidual: fit.dfResidual,
  means: [0],
  sds: [1], // identity standardisation: the stored model sees x itself
};

describe("logPredictive from a stored version", () => {
  it("coefficients are the hand-computed b₀ = −0.1, b₁ = 0.9", () => {
    expect(fit.coefficients[0]).toBeCloseTo(-0.1, 12);
    expect(fit.coefficients[1]).toBeCloseTo(0.9, 12);
  });
  it("at x₀ = 6: fit 5.3 and scale √(1.1/3 · (1 + 1/5 + 9/10)) = √0.77", () => {
    const p = logPredictive(stored, [6]);
    expect(p.logFit).toBeCloseTo(5.3, 12);
    expect(p.logScale).toBeCloseTo(Math.sqrt(0.77), 12);
  });
  it("at the mean x₀ = 3: scale √(s²(1 + 1/5)) = √0.44", () => {
    expect(logPredictive(stored, [3]).logScale).toBeCloseTo(Math.sqrt(0.44), 12);
  });
});

describe("forecastFromModel", () => {
  const f = forecastFromModel(stored, [{ code: "m", label: "Measure M" }], [6], { quantile: 0.8, level: 0.8 });
  it("median is exp(fit); the planning figure uses t(0.80, 3) = 0.978 (Student t table, one-sided 0.20, df 3)", () => {
    expect(f.medianHours).toBeCloseTo(Math.exp(5.3), 9);
    expect(Math.log(f.planningHours) - 5.3).toBeCloseTo(0.978 * Math.sqrt(0.77), 3);
  });
  it("the 80 % interval uses t(0.90, 3) = 1.638 (same table, one-sided 0.10)", () => {
    expect(Math.log(f.upperHours) - 5.3).toBeCloseTo(1.638 * Math.sqrt(0.77), 3);
    expect(5.3 - Math.log(f.lowerHours)).toBeCloseTo(1.638 * Math.sqrt(0.77), 3);
  });
  it("explanation: coefficient × standardised score, and baseline × every factor = median", () => {
    const c = f.contributions[0];
    expect(c.logContribution).toBeCloseTo(0.9 * 6, 12);
    expect(f.baselineHours).toBeCloseTo(Math.exp(-0.1), 12);
    expect(f.baselineHours * c.multiplier).toBeCloseTo(f.medianHours, 9);
    expect(c.sentence).toMatch(/^Measure M: 6\.0 SD better than the cohort average; this raises the forecast/);
  });
  it("standardises with the cohort's mean and SD: z = 2 with mean 1, SD 0.5 is 2 SD better", () => {
    const g = forecastFromModel({ ...stored, means: [1], sds: [0.5] }, [{ code: "m", label: "M" }], [2]);
    expect(g.contributions[0].standardised).toBeCloseTo(2, 12);
    expect(g.logFit).toBeCloseTo(-0.1 + 0.9 * 2, 12);
  });
  it("refuses mismatched lengths", () => {
    expect(() => forecastFromModel(stored, [{ code: "m", label: "M" }], [1, 2])).toThrow(/same length/);
  });
});

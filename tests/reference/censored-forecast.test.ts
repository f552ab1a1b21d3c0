// The forecast model on censored courses (app/compute/censored-forecast.ts): without censoring it is least
// squares on log hours (Kalbfleisch & Prentice 2002, ch. 3), its leave-one-out predictions then equal the
// hat-matrix shortcut (Cook & Weisberg 1982), and McKelvey & Zavoina's (1975) R² equals the least-squares
// R². With 35 % of the cohort still in training, the product's own forecast path (stored model →
// forecastFromModel) must cover 0.80 ± 0.03 of fresh trainees at the 80th percentile, and the leave-one-out
// Kaplan–Meier check must see that.

import { describe, expect, it } from "vitest";
import { type CensoredCourse, fitCensoredForecast } from "~/compute/censored-forecast";
import { forecastFromModel } from "~/compute/forecast-explain";
import { columnStandardizer, fitLinearModel, leaveOneOut } from "~/compute/regression";
import { seededGaussian } from "~/compute/seeded-random";

/** log T = β·[1, x] + σε; censoring time log C = β₀ + shift + spread·η (independent of T). */
function cohort(n: number, seed: number, censor: boolean, stoppedShare = 0) {
  const gauss = seededGaussian(seed);
  const beta = [3.2, 0.25, -0.18, 0.12];
  const courses: CensoredCourse[] = [];
  const trueHours: number[] = [];
  for (let i = 0; i < n; i++) {
    const x = [gauss(), gauss(), gauss()];
    const logT = beta[0] + x.reduce((s, v, j) => s + v * beta[j + 1], 0) + 0.35 * gauss();
    const logC = censor ? beta[0] + 0.25 + 0.4 * gauss() : Number.POSITIVE_INFINITY;
    trueHours.push(Math.exp(logT));
    const done = logT <= logC;
    const stopped = !done && (i % 100) / 100 < stoppedShare;
    courses.push({
      x,
      hours: Math.exp(Math.min(logT, logC)),
      outcome: done ? "completed" : stopped ? "stopped" : "training",
    });
  }
  return { courses, trueHours };
}

const measures = [
  { code: "a", label: "A" },
  { code: "b", label: "B" },
  { code: "c", label: "C" },
];

describe("without censoring the censored fit is least squares on log hours", () => {
  const { courses } = cohort(40, 7, false);
  const fit = fitCensoredForecast(courses, { quantile: 0.8 });
  const std = columnStandardizer(courses.map((c) => c.x));
  const Z = courses.map((c) => std.apply(c.x));
  const y = courses.map((c) => Math.log(c.hours));
  const ols = fitLinearModel(Z, y);

  it("has the least-squares coefficients, σ̂ = √(RSS/n) and the least-squares R²", () => {
    fit.model.coefficients.forEach((b, j) => {
      expect(Math.abs(b - ols.coefficients[j])).toBeLessThan(1e-8);
    });
    expect(fit.model.residualSD).toBeCloseTo(Math.sqrt(ols.residualSS / courses.length), 9);
    expect(fit.rSquared).toBeCloseTo(ols.rSquared, 9);
    expect(fit.model.dfResidual).toBe(courses.length - 4);
  });

  it("predicts each held-out course as the hat-matrix leave-one-out shortcut does", () => {
    const loo = leaveOneOut(Z, y, { level: 0.8 });
    fit.loocv.predictions.forEach((p, i) => {
      expect(Math.abs(Math.log(p.median) - loo.predictions[i])).toBeLessThan(1e-7);
    });
    expect(fit.loocv.maeHours).toBeCloseTo(
      fit.loocv.predictions.reduce((s, p) => s + Math.abs(p.median - p.hours), 0) / courses.length,
      12,
    );
  });

  it("without censoring the Kaplan–Meier share within the figure is the plain share", () => {
    const plain = fit.loocv.predictions.filter((p) => p.hours <= p.planning).length / courses.length;
    expect(fit.loocv.planningCoverage.coverage).toBeCloseTo(plain, 12);
    const inside = fit.loocv.predictions.filter((p) => p.hours >= p.lower && p.hours <= p.upper).length;
    expect(fit.loocv.centralCoverage80).toBeCloseTo(inside / courses.length, 12);
  });
});

describe("planning figure with 35 % of the cohort still in training (seeded simulation)", () => {
  // Target from the product design: 0.80 ± 0.03 of fresh trainees at the 80th percentile. Monte-Carlo SE
  // over 10 cohorts × 2,000 fresh trainees is √(0.16/20000) ≈ 0.003.
  let covered = 0;
  let fresh = 0;
  let censored = 0;
  let total = 0;
  for (let r = 0; r < 10; r++) {
    const { courses } = cohort(400, 300 + r, true);
    censored += courses.filter((c) => c.outcome !== "completed").length;
    total += courses.length;
    const fit = fitCensoredForecast(courses, { quantile: 0.8, leaveOneOut: false });
    const newcomers = cohort(2000, 900 + r, false);
    newcomers.courses.forEach((c, i) => {
      const f = forecastFromModel(fit.model, measures, c.x, { quantile: 0.8, level: 0.8 });
      if (newcomers.trueHours[i] <= f.planningHours) covered++;
      fresh++;
    });
  }

  it("has about 35 % censored and covers 0.80 ± 0.03 through the stored model", () => {
    expect(censored / total).toBeGreaterThan(0.32);
    expect(censored / total).toBeLessThan(0.38);
    expect(Math.abs(covered / fresh - 0.8)).toBeLessThan(0.03);
  });

  it("the leave-one-out Kaplan–Meier check reports about 0.80 too, and lower when stopped count as misses", () => {
    const { courses } = cohort(300, 77, true, 0.3);
    const fit = fitCensoredForecast(courses, { quantile: 0.8 });
    const c = fit.loocv.planningCoverage;
    expect(c.coverage).not.toBeNull();
    // 3 Greenwood SEs around the truth.
    expect(Math.abs((c.coverage as number) - 0.8)).toBeLessThan(3 * (c.standardError as number));
    expect(fit.stopped).toBeGreaterThan(0);
    expect(fit.loocv.planningCoverageStoppedAsMiss.coverage as number).toBeLessThan(c.coverage as number);
    expect(fit.loocv.riskGroups.map((g) => g.courses).reduce((a, b) => a + b, 0)).toBe(300);
  });
});

describe("bad input gets a plain message", () => {
  it("refuses too few completed courses, non-positive hours and mismatched rows", () => {
    const { courses } = cohort(10, 1, false);
    expect(() =>
      fitCensoredForecast(
        courses.map((c, i) => ({ ...c, outcome: i < 5 ? "completed" : "training" })),
        { quantile: 0.8 },
      ),
    ).toThrow("only 5 completed courses for 3 measures: at least 6 are needed");
    expect(() => fitCensoredForecast([{ ...courses[0], hours: 0 }, ...courses.slice(1)], { quantile: 0.8 })).toThrow(
      "course 1: hours must be a positive number",
    );
    expect(() =>
      fitCensoredForecast([courses[0], { ...courses[1], x: [1] }, ...courses.slice(2)], { quantile: 0.8 }),
    ).toThrow("course 2 has 1 measures, expected 3");
  });
});

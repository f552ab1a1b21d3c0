// Calibration of planning figures and the drift alarm: the exact binomial tail against exact rational
// arithmetic, the Clopper–Pearson (1934) bound against its closed forms, the Kaplan–Meier share within the
// figure on a hand-worked example, and the alarm's false-alarm and detection rates by seeded simulation.

// @ts-expect-error -- jstat ships no type declarations; used here only as an independent beta quantile
import jStatLib from "jstat";
import { describe, expect, it } from "vitest";
import {
  binomialLowerTail,
  clopperPearsonUpper,
  coverageAlarm,
  type PlannedCourse,
  planningFigureCoverage,
} from "~/compute/calibration";
import { gaussianSource, mulberry32 } from "~/compute/seeded-random";
import { normalQuantile } from "~/compute/student-t";

const jStat = jStatLib as {
  ibetainv(p: number, a: number, b: number): number;
  binomial: { cdf(x: number, n: number, p: number): number };
};

/** P(X ≤ x) for X ~ Binomial(n, num/den), by exact integer arithmetic, then one rounding to double. */
function exactBinomialTail(x: number, n: number, num: number, den: number): number {
  let choose = 1n;
  let total = 0n;
  for (let k = 0; k <= x; k++) {
    if (k > 0) choose = (choose * BigInt(n - k + 1)) / BigInt(k);
    total += choose * BigInt(num) ** BigInt(k) * BigInt(den - num) ** BigInt(n - k);
  }
  const denominator = BigInt(den) ** BigInt(n);
  const digits = 10n ** 30n;
  return Number((total * digits) / denominator) / 1e30;
}

describe("exact binomial tail and the Clopper–Pearson bound", () => {
  it.each([
    [20, 30, 4, 5],
    [0, 12, 4, 5],
    [45, 60, 4, 5],
    [90, 150, 13, 20],
    [3, 10, 1, 2],
  ])("P(X ≤ %d | n = %d, p = %d/%d) matches exact rational arithmetic", (x, n, num, den) => {
    const exact = exactBinomialTail(x, n, num, den);
    expect(Math.abs(binomialLowerTail(x, n, num / den) / exact - 1)).toBeLessThan(1e-12);
  });

  // jStat's binomial CDF as a second, outside route to the same tail. jStat rounds the CDF it returns to
  // 10 decimals (measured: 6.219776e-5 comes back as 6.21978e-5), so the agreement is absolute, to 1e-10.
  it.each([
    [20, 30, 0.8],
    [3, 12, 0.8],
    [45, 60, 0.8],
    [90, 150, 0.65],
    [160, 200, 0.8],
  ])("P(X ≤ %d | n = %d, p = %d) matches jStat's binomial CDF", (x, n, p) => {
    expect(Math.abs(binomialLowerTail(x, n, p) - jStat.binomial.cdf(x, n, p))).toBeLessThanOrEqual(1e-10);
  });

  // Clopper & Pearson (1934): with no successes the one-sided upper bound solves (1 − p)ⁿ = α, so it is
  // 1 − α^(1/n); with n − 1 successes it solves 1 − pⁿ = α, so it is (1 − α)^(1/n).
  it.each([5, 20, 100])("has the closed forms at x = 0 and x = n − 1 (n = %d)", (n) => {
    expect(clopperPearsonUpper(0, n, 0.05)).toBeCloseTo(1 - 0.05 ** (1 / n), 13);
    expect(clopperPearsonUpper(n - 1, n, 0.05)).toBeCloseTo(0.95 ** (1 / n), 13);
    expect(clopperPearsonUpper(n, n, 0.05)).toBe(1);
  });

  // The same bound is the (1 − α) quantile of Beta(x + 1, n − x) (Clopper & Pearson 1934); jStat's beta
  // inverse (tolerance 1e-8) is the independent route.
  it.each([
    [40, 60],
    [7, 12],
    [130, 150],
  ])("equals the Beta(x + 1, n − x) quantile at x = %d, n = %d", (x, n) => {
    expect(Math.abs(clopperPearsonUpper(x, n, 0.05) - jStat.ibetainv(0.95, x + 1, n - x))).toBeLessThan(1e-6);
  });
});

describe("planningFigureCoverage and coverageAlarm on a hand-worked example", () => {
  // Six courses planned at 10 hours each.
  const courses: PlannedCourse[] = [
    { planningHours: 10, hoursSoFar: 8, finishedAtHours: 8 }, // within
    { planningHours: 10, hoursSoFar: 12, finishedAtHours: 12 }, // miss
    { planningHours: 10, hoursSoFar: 5, finishedAtHours: null }, // pending, censored at 0.5 of the figure
    { planningHours: 10, hoursSoFar: 11, finishedAtHours: null }, // miss although still running
    { planningHours: 10, hoursSoFar: 10, finishedAtHours: 10 }, // within (exactly at the figure)
    { planningHours: 10, hoursSoFar: 9, finishedAtHours: null }, // pending, censored at 0.9
  ];

  // By hand on u = hours/figure: 0.5 censored (6 at risk → 5); 0.8 finish, S = 4/5; 0.9 censored (→ 3);
  // 1.0 finish, S = 4/5 · 2/3 = 8/15; share within = 7/15. Greenwood: S²·(1/(5·4) + 1/(3·2)).
  it("estimates the share within the figure by Kaplan–Meier", () => {
    const estimate = planningFigureCoverage(courses);
    expect(estimate).toMatchObject({ courses: 6, within: 2, missed: 2, pending: 2 });
    expect(estimate.coverage).toBeCloseTo(7 / 15, 14);
    expect(estimate.standardError).toBeCloseTo((8 / 15) * Math.sqrt(1 / 20 + 1 / 6), 14);
  });

  // Binomial(4, 0.8): P(X ≤ 2) = 1 − 4·0.8³·0.2 − 0.8⁴ = 0.1808.
  it("tests the resolved courses against the target", () => {
    const alarm = coverageAlarm(courses, { target: 0.8, alpha: 0.05 });
    expect(alarm).toMatchObject({ resolved: 4, within: 2, alarm: false });
    expect(alarm.pValue).toBeCloseTo(0.1808, 14);
    expect(alarm.rule).toContain("Binomial(4, 0.8)");
  });

  it("counts a running course as a miss as soon as its hours reach the figure", () => {
    const before = planningFigureCoverage([{ planningHours: 10, hoursSoFar: 9.9, finishedAtHours: null }]);
    expect(before).toMatchObject({ missed: 0, pending: 1, coverage: null });
    const after = planningFigureCoverage([{ planningHours: 10, hoursSoFar: 10.1, finishedAtHours: null }]);
    expect(after).toMatchObject({ missed: 1, pending: 0, coverage: 0 });
  });

  it("treats stopped courses as censored, or as misses in the sensitivity setting", () => {
    const withStopped: PlannedCourse[] = [
      ...courses,
      { planningHours: 10, hoursSoFar: 6, finishedAtHours: null, stopped: true },
    ];
    expect(planningFigureCoverage(withStopped).missed).toBe(2);
    const sensitivity = planningFigureCoverage(withStopped, { stoppedAs: "miss" });
    expect(sensitivity.missed).toBe(3);
    // The stopped course stays at risk through the figure: at 0.8 now 6 at risk, at 1.0 four.
    expect(sensitivity.coverage).toBeCloseTo(1 - (5 / 6) * (3 / 4), 14);
    expect(coverageAlarm(withStopped, { stoppedAs: "miss" }).resolved).toBe(5);
  });

  it("fires when the resolved courses are clearly short of the target", () => {
    const short: PlannedCourse[] = Array.from({ length: 20 }, (_, i) =>
      i < 11
        ? { planningHours: 10, hoursSoFar: 9, finishedAtHours: 9 }
        : { planningHours: 10, hoursSoFar: 13, finishedAtHours: null },
    );
    const alarm = coverageAlarm(short);
    // P(X ≤ 11 | 20, 0.8) ≈ 0.0100 by exact rational arithmetic.
    expect(alarm.alarm).toBe(true);
    expect(alarm.pValue).toBeCloseTo(exactBinomialTail(11, 20, 4, 5), 14);
    expect(alarm.upperBound).toBeLessThan(0.8);
  });
});

// ——— Simulation of the alarm ———
// A review looks at 60 courses (invented): planning figure P = exp(3.2 + 0.3·g); true hours
// T = P·exp(0.35·(ε − Φ⁻¹(c))), so that exactly a share c finishes within the figure; at the review each
// course has trained U(0.2, 2.0)·P hours (a finished course stopped counting at its finish), and 5 % of the
// unfinished ones have stopped.
function review(
  seed: number,
  coverage: number,
  progress: [number, number] = [0.2, 2.0],
  courses = 60,
): PlannedCourse[] {
  const uniform = mulberry32(seed);
  const gauss = gaussianSource(uniform);
  const shift = normalQuantile(coverage);
  return Array.from({ length: courses }, () => {
    const planningHours = Math.exp(3.2 + 0.3 * gauss());
    const trueHours = planningHours * Math.exp(0.35 * (gauss() - shift));
    const hoursSoFar = planningHours * (progress[0] + (progress[1] - progress[0]) * uniform());
    const stopped = uniform() < 0.05;
    return trueHours <= hoursSoFar
      ? { planningHours, hoursSoFar: trueHours, finishedAtHours: trueHours }
      : { planningHours, hoursSoFar, finishedAtHours: null, stopped };
  });
}

describe("drift alarm rates by seeded simulation (one-sided exact binomial test, α = 0.05)", () => {
  const alpha = 0.05;
  const reviews = 4000;
  const rate = (coverage: number, seedBase: number) => {
    let alarms = 0;
    let resolved = 0;
    let kmSum = 0;
    let kmCount = 0;
    for (let r = 0; r < reviews; r++) {
      const courses = review(seedBase + r, coverage);
      const alarm = coverageAlarm(courses, { target: 0.8, alpha });
      if (alarm.alarm) alarms++;
      resolved += alarm.resolved;
      const estimate = planningFigureCoverage(courses);
      if (estimate.coverage !== null) {
        kmSum += estimate.coverage;
        kmCount++;
      }
    }
    return { rate: alarms / reviews, meanResolved: resolved / reviews, meanKm: kmSum / kmCount };
  };
  // Monte-Carlo standard error of a rate near α over 4,000 reviews: √(0.05·0.95/4000) ≈ 0.0034.
  const monteCarloSE = Math.sqrt((alpha * (1 - alpha)) / reviews);
  const atTarget = rate(0.8, 10_000);
  const short = rate(0.65, 50_000);

  it("false-alarms at most α when coverage is exactly the target", () => {
    console.info(
      `courses in review 60, resolved per review ${atTarget.meanResolved.toFixed(1)} (at 0.80) / ${short.meanResolved.toFixed(1)} (at 0.65); ` +
        `false-alarm rate ${atTarget.rate.toFixed(4)} (MC SE ${monteCarloSE.toFixed(4)}); detection at 0.65 ${short.rate.toFixed(4)}; ` +
        `mean KM coverage ${atTarget.meanKm.toFixed(4)} / ${short.meanKm.toFixed(4)}`,
    );
    // Strictly ≤ α with no Monte-Carlo allowance; the rule is conservative while courses are pending,
    // because only finishes within the figure resolve early (the measured rate is far below α).
    expect(atTarget.rate).toBeLessThanOrEqual(alpha);
  });

  // About 39 of the 60 courses are resolved at a review in this scenario; the power is that of a
  // conservative test on them. Asserted: at least five times the false-alarm level.
  it("detects coverage of 0.65 at a rate well above α", () => {
    expect(short.meanResolved).toBeGreaterThan(35);
    expect(short.rate).toBeGreaterThan(5 * alpha);
  });

  // Kaplan–Meier with censoring recovers the true share within the figure (unbiased up to Monte-Carlo
  // error; SE of the mean over 4,000 reviews is about 0.001).
  it("estimates the share within the figure without bias", () => {
    expect(Math.abs(atTarget.meanKm - 0.8)).toBeLessThan(0.01);
    expect(Math.abs(short.meanKm - 0.65)).toBeLessThan(0.01);
  });

  // When every course has trained at least its figure, all 60 are resolved and the alarm is exactly the
  // binomial test: its size Σ pmf over the rejection region (≈ 0.043) and power at 0.65 (≈ 0.83) follow
  // from the binomial distribution; the simulation must agree within 3 Monte-Carlo standard errors.
  it("has the exact size and power of the binomial test when every course is resolved", () => {
    const n = 60;
    let critical = -1;
    while (binomialLowerTail(critical + 1, n, 0.8) <= alpha) critical++;
    const exactSize = binomialLowerTail(critical, n, 0.8);
    const exactPower = binomialLowerTail(critical, n, 0.65);
    expect(exactSize).toBeLessThanOrEqual(alpha);
    const simulated = (coverage: number, seedBase: number) => {
      let alarms = 0;
      for (let r = 0; r < reviews; r++) {
        // Every course has trained at least its planning figure: each is a finish within it or a miss.
        const courses = review(seedBase + r, coverage, [1, 2]);
        expect(coverageAlarm(courses).resolved).toBe(n);
        if (coverageAlarm(courses, { target: 0.8, alpha }).alarm) alarms++;
      }
      return alarms / reviews;
    };
    const size = simulated(0.8, 90_000);
    const power = simulated(0.65, 130_000);
    console.info(
      `all resolved (n = 60): size ${size.toFixed(4)} (exact ${exactSize.toFixed(4)}), power ${power.toFixed(4)} (exact ${exactPower.toFixed(4)})`,
    );
    expect(Math.abs(size - exactSize)).toBeLessThan(3 * Math.sqrt((exactSize * (1 - exactSize)) / reviews));
    expect(Math.abs(power - exactPower)).toBeLessThan(3 * Math.sqrt((exactPower * (1 - exactPower)) / reviews));
  });
});

describe("calibration refuses bad input with a plain message", () => {
  it.each([
    ["planning figure", [{ planningHours: 0, hoursSoFar: 1, finishedAtHours: null }], /course 1: planning figure/],
    ["hours so far", [{ planningHours: 10, hoursSoFar: -1, finishedAtHours: null }], /course 1: hours so far/],
    ["finish after the hours", [{ planningHours: 10, hoursSoFar: 5, finishedAtHours: 6 }], /6 hours but only 5/],
    ["finished and stopped", [{ planningHours: 10, hoursSoFar: 5, finishedAtHours: 5, stopped: true }], /both/],
  ])("%s", (_label, courses, message) => {
    expect(() => planningFigureCoverage(courses as PlannedCourse[])).toThrowError(message);
    expect(() => coverageAlarm(courses as PlannedCourse[])).toThrowError(message);
  });

  it("refuses a target or α outside (0, 1)", () => {
    expect(() => coverageAlarm([], { target: 80 })).toThrowError(/target coverage/);
    expect(() => coverageAlarm([], { alpha: 0 })).toThrowError(/alpha/);
  });
});

// Time to proficiency with censoring: Kaplan–Meier against the Gehan (1965) 6-MP data as tabulated by
// Kleinbaum & Klein, the censored log-normal fit against least squares and against an independent
// maximisation written here, and a coverage simulation that shows why censored courses must not be dropped.

import { describe, expect, it } from "vitest";
import { normalHazard, normalLogDensity, normalLogUpperTail } from "~/compute/normal-tail";
import { fitLinearModel, plannedHours } from "~/compute/regression";
import { seededGaussian } from "~/compute/seeded-random";
import { normalCdf, normalQuantile } from "~/compute/student-t";
import { fitLognormalAft, kaplanMeier } from "~/compute/survival";
import { independentLogLikelihood, nelderMeadMaximise } from "./censored-likelihood";

// Gehan, E. A. (1965), Biometrika 52:203–223: remission times in weeks of 21 leukaemia patients per arm.
// Values typed from memory of the textbook table (Kleinbaum & Klein, Survival Analysis, ch. 2);
// "+" (here a negative sign) marks a censored time.
const SIX_MP = [6, 6, 6, -6, 7, -9, 10, -10, -11, 13, 16, -17, -19, -20, 22, 23, -25, -32, -32, -34, -35];
const PLACEBO = [1, 1, 2, 2, 3, 4, 4, 5, 5, 8, 8, 8, 8, 11, 11, 12, 12, 15, 17, 22, 23];
const times = (arm: number[]) => arm.map(Math.abs);
const events = (arm: number[]) => arm.map((t) => t > 0);

describe("kaplanMeier on the Gehan (1965) 6-MP remission data", () => {
  const sixMp = kaplanMeier(times(SIX_MP), events(SIX_MP));
  const placebo = kaplanMeier(times(PLACEBO), events(PLACEBO));

  // Published medians: 23 weeks (6-MP) and 8 weeks (placebo), Kleinbaum & Klein, Survival Analysis, ch. 2.
  it("reproduces the published medians, 23 and 8 weeks", () => {
    expect(sixMp.median).toBe(23);
    expect(placebo.median).toBe(8);
  });

  // Kleinbaum & Klein, ch. 2, KM table for the 6-MP group (values from memory, three decimals).
  it("reproduces the textbook survival estimates of the 6-MP group", () => {
    const textbook: [number, number, number, number][] = [
      // t, n at risk, events, S(t)
      [6, 21, 3, 0.857],
      [7, 17, 1, 0.807],
      [10, 15, 1, 0.753],
      [13, 12, 1, 0.69],
      [16, 11, 1, 0.627],
      [22, 7, 1, 0.538],
      [23, 6, 1, 0.448],
    ];
    expect(sixMp.times).toEqual(textbook.map((r) => r[0]));
    expect(sixMp.atRisk).toEqual(textbook.map((r) => r[1]));
    expect(sixMp.events).toEqual(textbook.map((r) => r[2]));
    sixMp.survival.forEach((s, j) => {
      expect(s).toBeCloseTo(textbook[j][3], 3);
    });
  });

  // Greenwood SE at t = 6 is 0.076 (from memory of the same textbook); exactly (18/21)·√(3/(21·18)).
  it("gives Greenwood's standard error", () => {
    expect(sixMp.standardErrors[0]).toBeCloseTo(0.076, 3);
    expect(sixMp.standardErrors[0]).toBeCloseTo((18 / 21) * Math.sqrt(3 / (21 * 18)), 14);
    // Greenwood by hand at t = 7: S(7)²·(3/(21·18) + 1/(17·16)).
    const s7 = (18 / 21) * (16 / 17);
    expect(sixMp.standardErrors[1]).toBeCloseTo(s7 * Math.sqrt(3 / (21 * 18) + 1 / (17 * 16)), 14);
  });

  // Without censoring, Kaplan–Meier is the empirical survival function (Kaplan & Meier 1958).
  it("equals the empirical survival function on the uncensored placebo arm", () => {
    placebo.times.forEach((t, j) => {
      const empirical = PLACEBO.filter((v) => v > t).length / PLACEBO.length;
      expect(placebo.survival[j]).toBeCloseTo(empirical, 14);
    });
    expect(placebo.survival.at(-1)).toBe(0);
    expect(placebo.standardErrors.at(-1)).toBe(0);
  });

  it("returns null as median when the estimate never reaches one half", () => {
    expect(kaplanMeier([1, 2, 3, 4], [true, false, false, false]).median).toBeNull();
  });

  it("leaves its inputs alone", () => {
    const t = Object.freeze(times(SIX_MP).reverse());
    const e = Object.freeze(events(SIX_MP).reverse());
    const again = kaplanMeier(t as number[], e as boolean[]);
    expect(again.median).toBe(23);
    expect(t).toEqual(times(SIX_MP).reverse());
  });
});

describe("normal log upper tail", () => {
  // 1 − Φ(z) at z = 5 and 10: 2.866515718791939e-7 and 7.619853024160527e-24 (standard tables; from memory).
  it("matches tabulated tail areas", () => {
    expect(Math.abs(Math.exp(normalLogUpperTail(5)) / 2.866515718791939e-7 - 1)).toBeLessThan(1e-13);
    expect(Math.abs(Math.exp(normalLogUpperTail(10)) / 7.619853024160527e-24 - 1)).toBeLessThan(1e-13);
    expect(normalLogUpperTail(0)).toBeCloseTo(-Math.LN2, 15);
    expect(normalLogUpperTail(-1.5)).toBeCloseTo(Math.log(normalCdf(1.5)), 15);
  });

  // Far in the tail, the asymptotic Mills-ratio series 1 − Φ(z) ≈ φ(z)/z · (1 − 1/z² + 3/z⁴ − 15/z⁶ + 105/z⁸)
  // (Abramowitz & Stegun 26.2.12) is exact to the size of the next term; log(1 − normalCdf(z)) is −∞ there.
  it.each([20, 40, 1000])("follows the asymptotic series at z = %d where 1 − Φ underflows", (z) => {
    const series = Math.log1p(-1 / z ** 2 + 3 / z ** 4 - 15 / z ** 6 + 105 / z ** 8);
    const expected = normalLogDensity(z) - Math.log(z) + series;
    expect(Math.abs(normalLogUpperTail(z) - expected)).toBeLessThan(945 / z ** 10 + 1e-13 * Math.abs(expected));
    expect(Number.isFinite(normalHazard(z))).toBe(true);
    expect(normalHazard(z)).toBeGreaterThan(z);
    expect(normalHazard(z)).toBeLessThan(z + 1 / z);
  });
});

// ——— Censored log-normal fit ———

/** Synthetic cohort with k measures: log T = b·[1, x] + σε, follow-up log C = log T's mean + shift + spread·ε′. */
function censoredCohort(
  n: number,
  seed: number,
  options: { beta: number[]; sigma: number; censorShift: number; censorSpread: number },
) {
  const gauss = seededGaussian(seed);
  const k = options.beta.length - 1;
  const x: number[][] = [];
  const time: number[] = [];
  const event: boolean[] = [];
  const trueTime: number[] = [];
  for (let i = 0; i < n; i++) {
    const row = Array.from({ length: k }, () => gauss());
    const mean = options.beta[0] + row.reduce((s, v, j) => s + v * options.beta[j + 1], 0);
    const logT = mean + options.sigma * gauss();
    const logC = options.beta[0] + options.censorShift + options.censorSpread * gauss();
    x.push(row);
    trueTime.push(Math.exp(logT));
    time.push(Math.exp(Math.min(logT, logC)));
    event.push(logT <= logC);
  }
  return { x, time, event, trueTime };
}

/** Central-difference Hessian of f at v with step h. */
function numericalHessian(f: (v: number[]) => number, v: number[], h: number): number[][] {
  const d = v.length;
  const at = (changes: [number, number][]) => {
    const w = v.slice();
    for (const [j, delta] of changes) w[j] += delta;
    return f(w);
  };
  return Array.from({ length: d }, (_, a) =>
    Array.from({ length: d }, (_, b) =>
      a === b
        ? (at([[a, h]]) - 2 * f(v) + at([[a, -h]])) / (h * h)
        : (at([
            [a, h],
            [b, h],
          ]) -
            at([
              [a, h],
              [b, -h],
            ]) -
            at([
              [a, -h],
              [b, h],
            ]) +
            at([
              [a, -h],
              [b, -h],
            ])) /
          (4 * h * h),
    ),
  );
}

/** Inverse of a small symmetric positive-definite matrix by Gauss–Jordan elimination. */
function invert(matrix: number[][]): number[][] {
  const d = matrix.length;
  const a = matrix.map((row, i) => [...row, ...Array.from({ length: d }, (_, j) => (i === j ? 1 : 0))]);
  for (let c = 0; c < d; c++) {
    const pivot = a[c][c];
    for (let j = 0; j < 2 * d; j++) a[c][j] /= pivot;
    for (let r = 0; r < d; r++) {
      if (r === c) continue;
      const factor = a[r][c];
      for (let j = 0; j < 2 * d; j++) a[r][j] -= factor * a[c][j];
    }
  }
  return a.map((row) => row.slice(d));
}

describe("fitLognormalAft without censoring equals least squares on log hours", () => {
  const { x, trueTime } = censoredCohort(120, 11, {
    beta: [3.2, 0.3, -0.2, 0.1],
    sigma: 0.4,
    censorShift: 0,
    censorSpread: 0,
  });
  const allFinished = trueTime.map(() => true);
  const fit = fitLognormalAft(x, trueTime, allFinished);
  const ols = fitLinearModel(
    x,
    trueTime.map((t) => Math.log(t)),
  );
  const n = trueTime.length;

  it("has the least-squares coefficients (to 1e-8) and σ̂ = √(RSS/n)", () => {
    expect(fit.converged).toBe(true);
    fit.coefficients.forEach((b, j) => {
      expect(Math.abs(b - ols.coefficients[j])).toBeLessThan(1e-8);
    });
    expect(Math.abs(fit.sigma - Math.sqrt(ols.residualSS / n))).toBeLessThan(1e-10);
  });

  // Normal-theory maximum likelihood (e.g. Kalbfleisch & Prentice 2002, ch. 3 with no censoring): the
  // maximised log likelihood is −n/2·(log 2πσ̂² + 1), Var β̂ = σ̂²(XᵀX)⁻¹ with σ̂² = RSS/n — so the standard
  // errors are the least-squares ones times √((n − p)/n) — and the SE of log σ̂ is 1/√(2n).
  it("has the normal-theory log likelihood and standard errors", () => {
    expect(fit.logLikelihood).toBeCloseTo((-n / 2) * (Math.log(2 * Math.PI * fit.sigma ** 2) + 1), 9);
    const p = ols.coefficients.length;
    fit.standardErrors.forEach((se, j) => {
      expect(Math.abs(se / (ols.standardErrors[j] * Math.sqrt((n - p) / n)) - 1)).toBeLessThan(1e-8);
    });
    expect(fit.logSigmaStandardError).toBeCloseTo(1 / Math.sqrt(2 * n), 10);
  });

  it("gives the quantile exp(β·[1, x] + σ·Φ⁻¹(p)) in hours", () => {
    const row = [0.5, -1, 0.25];
    const logMean = fit.coefficients[0] + row.reduce((s, v, j) => s + v * fit.coefficients[j + 1], 0);
    expect(fit.quantile(row, 0.8)).toBeCloseTo(Math.exp(logMean + fit.sigma * normalQuantile(0.8)), 10);
    expect(fit.quantile(row, 0.5)).toBeCloseTo(Math.exp(logMean), 10);
  });
});

describe("fitLognormalAft with censoring agrees with an independent maximisation", () => {
  const cases = [
    { label: "about 35 % censored", seed: 21, censorShift: 0.25, censorSpread: 0.5 },
    { label: "about 75 % censored (far from the start values)", seed: 22, censorShift: -0.45, censorSpread: 0.3 },
  ];
  it.each(cases)("$label: β and σ to 1e-6, standard errors against a numerical Hessian", (c) => {
    const { x, time, event } = censoredCohort(80, c.seed, {
      beta: [3.2, 0.3, -0.2],
      sigma: 0.4,
      censorShift: c.censorShift,
      censorSpread: c.censorSpread,
    });
    const censoredShare = event.filter((e) => !e).length / event.length;
    if (c.seed === 21) expect(censoredShare).toBeGreaterThan(0.25);
    else expect(censoredShare).toBeGreaterThan(0.6);

    const fit = fitLognormalAft(x, time, event);
    expect(fit.converged).toBe(true);
    const ll = (v: number[]) => independentLogLikelihood(x, time, event, v);
    // Start the optimiser from least squares on every log time, as a naive analyst would.
    const ols = fitLinearModel(
      x,
      time.map((t) => Math.log(t)),
    );
    const direct = nelderMeadMaximise(ll, [...ols.coefficients, Math.log(ols.residualSD)]);
    fit.coefficients.forEach((b, j) => {
      expect(Math.abs(b - direct[j])).toBeLessThan(1e-6);
    });
    expect(Math.abs(fit.sigma - Math.exp(direct[3]))).toBeLessThan(1e-6);
    const mine = [...fit.coefficients, Math.log(fit.sigma)];
    expect(fit.logLikelihood).toBeCloseTo(ll(mine), 9);
    expect(ll(direct)).toBeLessThanOrEqual(fit.logLikelihood + 1e-9);

    // Observed information = −(numerical Hessian of the independent log likelihood) at the estimate.
    const covariance = invert(numericalHessian(ll, mine, 1e-3).map((row) => row.map((v) => -v)));
    fit.standardErrors.forEach((se, j) => {
      expect(Math.abs(se / Math.sqrt(covariance[j][j]) - 1)).toBeLessThan(1e-4);
    });
    expect(Math.abs(fit.logSigmaStandardError / Math.sqrt(covariance[3][3]) - 1)).toBeLessThan(1e-4);
  });

  it("is unaffected by the scale of a measure (internal standardisation is undone)", () => {
    const { x, time, event } = censoredCohort(80, 21, {
      beta: [3.2, 0.3, -0.2],
      sigma: 0.4,
      censorShift: 0.25,
      censorSpread: 0.5,
    });
    const fit = fitLognormalAft(x, time, event);
    const shifted = fitLognormalAft(
      x.map(([a, b]) => [1000 + 100 * a, b]),
      time,
      event,
    );
    expect(shifted.coefficients[1] * 100).toBeCloseTo(fit.coefficients[1], 10);
    expect(shifted.standardErrors[1] * 100).toBeCloseTo(fit.standardErrors[1], 10);
    expect(shifted.sigma).toBeCloseTo(fit.sigma, 12);
    expect(shifted.quantile([1000 + 100 * 0.7, -0.3], 0.8)).toBeCloseTo(fit.quantile([0.7, -0.3], 0.8), 8);
  });

  // Rounding in a 5,000-term log likelihood floors the Newton decrement; the stopping rule must sit above it.
  it("converges on a cohort of 5,000 courses × 8 measures, and reports when it ran out of iterations", () => {
    const big = censoredCohort(5000, 24, {
      beta: [3.2, 0.25, -0.18, 0.12, 0.08, -0.05, 0.04, 0.02, 0],
      sigma: 0.35,
      censorShift: 0.25,
      censorSpread: 0.4,
    });
    const fit = fitLognormalAft(big.x, big.time, big.event);
    expect(fit.converged).toBe(true);
    expect(fit.iterations).toBeLessThan(10);
    expect(Math.abs(fit.sigma - 0.35)).toBeLessThan(4 * 0.35 * fit.logSigmaStandardError);
    const stopped = fitLognormalAft(big.x, big.time, big.event, { maxIterations: 1 });
    expect(stopped.converged).toBe(false);
    expect(stopped.iterations).toBe(1);
  });

  it("leaves its inputs alone", () => {
    const { x, time, event } = censoredCohort(40, 23, {
      beta: [3, 0.2],
      sigma: 0.5,
      censorShift: 0.2,
      censorSpread: 0.5,
    });
    const copies = JSON.stringify([x, time, event]);
    const frozen = [Object.freeze(x.map((r) => Object.freeze(r))), Object.freeze(time), Object.freeze(event)];
    fitLognormalAft(frozen[0] as number[][], frozen[1] as number[], frozen[2] as boolean[]);
    expect(JSON.stringify([x, time, event])).toBe(copies);
  });
});

// ——— Coverage of the planning figure ———
// Synthetic cohorts (invented): log hours = 3.2 + 0.25·z₁ − 0.18·z₂ + 0.12·z₃ + 0.35·ε; the snapshot is taken
// while about 35 % of the courses are still running, censored at their hours so far. The 80th-percentile
// planning figure is then scored against fresh trainees drawn from the same truth.
describe("coverage of the 80th-percentile planning figure with 35 % of courses still running", () => {
  const truth = { beta: [3.2, 0.25, -0.18, 0.12], sigma: 0.35, censorShift: 0.25, censorSpread: 0.4 };
  const replicates = 20;
  const cohortSize = 500;
  const freshPerCohort = 2000;
  let censored = 0;
  let total = 0;
  let coveredCensored = 0;
  let coveredOld = 0;
  let fresh = 0;
  for (let r = 0; r < replicates; r++) {
    const cohort = censoredCohort(cohortSize, 1000 + r, truth);
    censored += cohort.event.filter((e) => !e).length;
    total += cohortSize;
    const fit = fitLognormalAft(cohort.x, cohort.time, cohort.event);
    // The old approach: drop the courses still running, least squares on the completed ones.
    const done = cohort.event.map((e, i) => (e ? i : -1)).filter((i) => i >= 0);
    const old = fitLinearModel(
      done.map((i) => cohort.x[i]),
      done.map((i) => Math.log(cohort.time[i])),
    );
    const newcomers = censoredCohort(freshPerCohort, 5000 + r, truth);
    newcomers.x.forEach((row, i) => {
      if (newcomers.trueTime[i] <= fit.quantile(row, 0.8)) coveredCensored++;
      if (newcomers.trueTime[i] <= plannedHours(old, row, { quantile: 0.8 }).planningHours) coveredOld++;
      fresh++;
    });
  }
  const censoredShare = censored / total;
  const coverage = coveredCensored / fresh;
  const oldCoverage = coveredOld / fresh;

  it("has about 35 % of the cohort censored", () => {
    expect(censoredShare).toBeGreaterThan(0.32);
    expect(censoredShare).toBeLessThan(0.38);
  });

  // Target from the product design: 0.80 ± 0.03. Monte-Carlo SE of the pooled share over 40,000 fresh
  // trainees is √(0.16/40000) = 0.002, so the band is not eaten by simulation noise.
  it("covers 0.80 ± 0.03 of fresh trainees when fitted as censored data", () => {
    console.info(
      `censored ${censoredShare.toFixed(3)}; coverage censored fit ${coverage.toFixed(4)}, dropped ${oldCoverage.toFixed(4)}`,
    );
    expect(Math.abs(coverage - 0.8)).toBeLessThan(0.03);
  });

  it("falls short when the running courses are dropped (the old approach, kept as the demonstration)", () => {
    expect(oldCoverage).toBeLessThan(0.77);
  });
});

describe("fitLognormalAft and kaplanMeier refuse bad input with a plain message", () => {
  it.each([
    ["mismatched lengths", () => kaplanMeier([1, 2, 3], [true, false]), /3 values .* 2/],
    ["non-positive hours", () => kaplanMeier([1, 0, 3], [true, true, false]), /positive.*course 2/],
    ["negative hours", () => fitLognormalAft([[1], [2], [3]], [4, -1, 2], [true, true, true]), /positive.*course 2/],
    ["no completed course", () => kaplanMeier([1, 2], [false, false]), /no completed course/],
    ["no completed course (fit)", () => fitLognormalAft([[1], [2]], [1, 2], [false, false]), /no completed course/],
    ["rows vs hours", () => fitLognormalAft([[1], [2]], [1, 2, 3], [true, true, true]), /2 rows .* 3 values/],
    [
      "ragged measures",
      () => fitLognormalAft([[1], [2, 3], [4]], [1, 2, 3], [true, true, true]),
      /course 2 has 2 measures/,
    ],
    [
      "constant measure",
      () => fitLognormalAft([[1], [1], [1]], [1, 2, 3], [true, true, true]),
      /measure 1 is the same/,
    ],
  ])("%s", (_label, run, message) => {
    expect(run).toThrowError(message);
  });
});

import { levenbergMarquardt } from "ml-levenberg-marquardt";
import { Matrix, solve } from "ml-matrix";
import { describe, expect, it } from "vitest";
import {
  automaticStart,
  curveScore,
  fitSaturatingExponential,
  plateausBelowCriterion,
  timeToReach,
  timeToReachWithUncertainty,
} from "~/compute/curve";
import { seededGaussian } from "~/compute/seeded-random";

const relativeError = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

// NIST StRD nonlinear regression, "Misra1a" (lower difficulty). Misra, D. (1978), Dental Research Monomer
// Study. Model y = b1·(1 − exp(−b2·x)). Data and certified values from NIST StRD Misra1a.dat.
const MISRA1A_Y = [10.07, 14.73, 17.94, 23.93, 29.61, 35.18, 40.02, 44.82, 50.76, 55.05, 61.01, 66.4, 75.47, 81.78];
const MISRA1A_X = [77.6, 114.9, 141.1, 190.8, 239.9, 289.0, 332.8, 378.4, 434.8, 477.3, 536.8, 593.1, 689.1, 760.0];
const MISRA1A = {
  b1: 2.3894212918e2,
  b2: 5.5015643181e-4,
  se1: 2.7070075241,
  se2: 7.2668688436e-6,
  residualSS: 1.2455138894e-1,
  residualSD: 1.018787633e-1,
};

describe("fitSaturatingExponential against NIST StRD Misra1a (fixStart: 0)", () => {
  const starts: [string, { asymptote: number; rate: number } | undefined][] = [
    ["NIST start 1 (b1 = 500, b2 = 1e-4)", { asymptote: 500, rate: 1e-4 }],
    ["NIST start 2 (b1 = 250, b2 = 5e-4)", { asymptote: 250, rate: 5e-4 }],
    ["automatic start", undefined],
  ];
  it.each(starts)("converges from %s to the certified values (≥ 6 significant digits)", (_label, initial) => {
    const fit = fitSaturatingExponential(MISRA1A_X, MISRA1A_Y, { fixStart: 0, initial });
    expect(fit.converged).toBe(true);
    expect(fit.start).toBe(0);
    expect(relativeError(fit.asymptote, MISRA1A.b1)).toBeLessThan(1e-6);
    expect(relativeError(fit.rate, MISRA1A.b2)).toBeLessThan(1e-6);
    expect(relativeError(fit.residualSS, MISRA1A.residualSS)).toBeLessThan(1e-6);
    // Certified standard deviations of the estimates, to ~4 digits.
    expect(relativeError(fit.standardErrors.asymptote, MISRA1A.se1)).toBeLessThan(1e-4);
    expect(relativeError(fit.standardErrors.rate, MISRA1A.se2)).toBeLessThan(1e-4);
    expect(fit.standardErrors.start).toBeUndefined();
    expect(relativeError(fit.residualSD, MISRA1A.residualSD)).toBeLessThan(1e-6);
    expect(fit.dfResidual).toBe(12); // NIST: 14 observations − 2 parameters
  });

  it("the automatic start lies in the basin: within 10 % of the certified values before any LM step", () => {
    const s = automaticStart(MISRA1A_X, MISRA1A_Y, 0);
    expect(relativeError(s.asymptote, MISRA1A.b1)).toBeLessThan(0.1);
    expect(relativeError(s.rate, MISRA1A.b2)).toBeLessThan(0.1);
  });
});

describe("fitSaturatingExponential against NIST StRD BoxBOD (higher difficulty, fixStart: 0)", () => {
  // Box, Hunter & Hunter (1978), Statistics for Experimenters, pp. 483–487; NIST StRD BoxBOD.dat.
  // Certified b1 = 2.1380940889E+02, b2 = 5.4723748542E-01, RSS 1.1680088766E+03,
  // SE b1 1.2354515176E+01, SE b2 1.0455993237E-01.
  // NIST start 1 (1, 1) leads this model into the flat region where exp(−b2·x) ≈ 0 for every x (a
  // known trap of this dataset); start 2 and the automatic start are tested.
  const x = [1, 2, 3, 5, 7, 10];
  const y = [109, 149, 149, 191, 213, 224];
  it.each([
    ["NIST start 2 (100, 0.75)", { asymptote: 100, rate: 0.75 }],
    ["automatic start", undefined],
  ] as const)("converges from %s", (_label, initial) => {
    const fit = fitSaturatingExponential(x, y, { fixStart: 0, initial });
    expect(fit.converged).toBe(true);
    expect(relativeError(fit.asymptote, 2.1380940889e2)).toBeLessThan(1e-6);
    expect(relativeError(fit.rate, 5.4723748542e-1)).toBeLessThan(1e-6);
    expect(relativeError(fit.residualSS, 1.1680088766e3)).toBeLessThan(1e-6);
    expect(relativeError(fit.standardErrors.asymptote, 1.2354515176e1)).toBeLessThan(1e-4);
    expect(relativeError(fit.standardErrors.rate, 1.0455993237e-1)).toBeLessThan(1e-4);
  });
});

describe("three-parameter curve (free start)", () => {
  // Independent check 1: the reference library ml-levenberg-marquardt on the same data and model.
  // Independent check 2: variable projection — for a fixed rate the model is linear in (asymptote, start);
  // the profile RSS(rate) is minimised here by golden-section search with ml-matrix's solver for the
  // linear part, sharing no code with the LM fit.
  const x = MISRA1A_X;
  const y = MISRA1A_Y;
  const fit = fitSaturatingExponential(x, y);

  function profile(rate: number) {
    const A = new Matrix(x.map((xi) => [1 - Math.exp(-rate * xi), Math.exp(-rate * xi)]));
    const At = A.transpose();
    const coef = solve(At.mmul(A), At.mmul(Matrix.columnVector(y))).to1DArray();
    const rss = y.reduce((s, yi, i) => s + (yi - coef[0] * A.get(i, 0) - coef[1] * A.get(i, 1)) ** 2, 0);
    return { asymptote: coef[0], start: coef[1], rss };
  }

  it("agrees with golden-section minimisation of the profile residual sum of squares", () => {
    let lo = 1e-4;
    let hi = 2e-3;
    const g = (Math.sqrt(5) - 1) / 2;
    for (let i = 0; i < 200; i++) {
      const m1 = hi - g * (hi - lo);
      const m2 = lo + g * (hi - lo);
      if (profile(m1).rss < profile(m2).rss) hi = m2;
      else lo = m1;
    }
    const rate = (lo + hi) / 2;
    const best = profile(rate);
    expect(fit.converged).toBe(true);
    expect(relativeError(fit.rate, rate)).toBeLessThan(1e-6);
    expect(relativeError(fit.asymptote, best.asymptote)).toBeLessThan(1e-6);
    expect(Math.abs(fit.start - best.start)).toBeLessThan(1e-6);
    expect(fit.residualSS).toBeLessThanOrEqual(best.rss * (1 + 1e-10));
    expect(fit.standardErrors.start).toBeGreaterThan(0);
  });

  it("agrees with ml-levenberg-marquardt to 6 digits", () => {
    const reference = levenbergMarquardt(
      { x, y },
      ([a, s, c]: number[]) =>
        (t: number) =>
          a - (a - s) * Math.exp(-c * t),
      {
        initialValues: [240, 0, 5e-4],
        maxIterations: 2000,
        errorTolerance: 1e-14,
        damping: 1e-2,
        gradientDifference: [1e-6, 1e-6, 1e-10],
      },
    );
    const [a, s, c] = reference.parameterValues;
    expect(relativeError(fit.asymptote, a)).toBeLessThan(1e-6);
    expect(relativeError(fit.rate, c)).toBeLessThan(1e-6);
    expect(Math.abs(fit.start - s)).toBeLessThan(1e-5);
    expect(relativeError(fit.residualSS, reference.parameterError)).toBeLessThan(1e-9);
  });

  it("recovers a simulated learning curve (score 0–1): ±2 SE intervals cover the truth ~95 % of the time", () => {
    // Known truth: asymptote 0.92, start 0.2, rate 0.08 per hour; 30 sessions 1.5 h apart; noise SD 0.02
    // (seeded Box–Muller). Over 200 simulated trainees, Wald intervals θ̂ ± 2·SE should cover θ about 95 %
    // of the time (normal theory; a little less is expected for a nonlinear model with 27 df).
    const truth = { asymptote: 0.92, start: 0.2, rate: 0.08 };
    const hours = Array.from({ length: 30 }, (_, i) => 1 + i * 1.5);
    const covered = { asymptote: 0, start: 0, rate: 0 };
    const sums = { asymptote: 0, start: 0, rate: 0 };
    const trainees = 200;
    for (let r = 0; r < trainees; r++) {
      const gauss = seededGaussian(500 + r);
      const scores = hours.map((h) => curveScore(truth, h) + 0.02 * gauss());
      const f = fitSaturatingExponential(hours, scores);
      expect(f.converged).toBe(true);
      for (const key of ["asymptote", "start", "rate"] as const) {
        const se = f.standardErrors[key] as number;
        if (Math.abs(f[key] - truth[key]) <= 2 * se) covered[key]++;
        sums[key] += f[key];
      }
    }
    for (const key of ["asymptote", "start", "rate"] as const) {
      expect(covered[key] / trainees).toBeGreaterThan(0.88);
      expect(relativeError(sums[key] / trainees, truth[key])).toBeLessThan(0.03);
    }
  });
});

describe("timeToReach", () => {
  it("inverts the curve: half-life ln 2 / rate for a = 1, s = 0 (exponential approach, common math)", () => {
    expect(timeToReach({ asymptote: 1, start: 0, rate: Math.LN2 }, 0.5)).toBeCloseTo(1, 14);
  });
  it("t = ln((a − s)/(a − T))/c: a 0.9, s 0.3, c 0.1, T 0.8 → 10·ln 6 = 17.9176 h (hand computation)", () => {
    const t = timeToReach({ asymptote: 0.9, start: 0.3, rate: 0.1 }, 0.8) as number;
    expect(t).toBeCloseTo(17.91759469228055, 12);
    expect(curveScore({ asymptote: 0.9, start: 0.3, rate: 0.1 }, t)).toBeCloseTo(0.8, 14);
  });
  it("is null when the asymptote is not above the threshold or the rate is not positive; 0 when started above", () => {
    expect(timeToReach({ asymptote: 0.8, start: 0.3, rate: 0.1 }, 0.8)).toBeNull();
    expect(timeToReach({ asymptote: 0.7, start: 0.3, rate: 0.1 }, 0.8)).toBeNull();
    expect(timeToReach({ asymptote: 0.9, start: 0.3, rate: 0 }, 0.8)).toBeNull();
    expect(timeToReach({ asymptote: 0.9, start: 0.85, rate: 0.1 }, 0.8)).toBe(0);
  });
  it("on the certified Misra1a curve, reaches y = 50 at ln(b1/(b1 − 50))/b2 ≈ 426.0 (hand computation)", () => {
    const fit = fitSaturatingExponential(MISRA1A_X, MISRA1A_Y, { fixStart: 0 });
    const expected = Math.log(MISRA1A.b1 / (MISRA1A.b1 - 50)) / MISRA1A.b2;
    expect(relativeError(timeToReach(fit, 50) as number, expected)).toBeLessThan(1e-6);
  });
});

describe("timeToReachWithUncertainty (delta method) against Monte Carlo", () => {
  // Var(t) ≈ ∇tᵀΣ∇t (Casella & Berger 2002, §5.5.4). Checked by drawing parameters from N(θ̂, Σ) with a
  // hand-rolled Cholesky factor and the seeded Box–Muller generator; for the small Σ of Misra1a the
  // spread of t(θ) should match the delta-method SD within 5 %.
  it("matches the simulated SD of the time to reach y = 50", () => {
    const fit = fitSaturatingExponential(MISRA1A_X, MISRA1A_Y, { fixStart: 0 });
    const delta = timeToReachWithUncertainty(fit, 50);
    expect(delta).not.toBeNull();
    const [[v11, v12], [, v22]] = fit.covariance;
    const l11 = Math.sqrt(v11);
    const l21 = v12 / l11;
    const l22 = Math.sqrt(v22 - l21 * l21);
    const gauss = seededGaussian(99);
    const draws: number[] = [];
    for (let i = 0; i < 20000; i++) {
      const z1 = gauss();
      const z2 = gauss();
      const a = fit.asymptote + l11 * z1;
      const c = fit.rate + l21 * z1 + l22 * z2;
      draws.push(Math.log(a / (a - 50)) / c);
    }
    const mean = draws.reduce((s, v) => s + v, 0) / draws.length;
    const sd = Math.sqrt(draws.reduce((s, v) => s + (v - mean) ** 2, 0) / (draws.length - 1));
    expect(relativeError(delta!.sd, sd)).toBeLessThan(0.05);
    expect(relativeError(delta!.hours, mean)).toBeLessThan(0.01);
  });
});

describe("plateausBelowCriterion", () => {
  // Rule (documented in curve.ts): asymptote + 2·SE(asymptote) < threshold.
  const gauss = seededGaussian(21);
  const hours = Array.from({ length: 20 }, (_, i) => 1 + i * 2);
  it("flags a trainee levelling off at 0.60 against a 0.85 criterion", () => {
    const scores = hours.map((h) => 0.6 - 0.4 * Math.exp(-0.2 * h) + 0.015 * gauss());
    const fit = fitSaturatingExponential(hours, scores);
    expect(fit.asymptote + 2 * fit.standardErrors.asymptote).toBeLessThan(0.85);
    expect(plateausBelowCriterion(fit, 0.85)).toBe(true);
    expect(timeToReach(fit, 0.85)).toBeNull();
  });
  it("does not flag a trainee heading for 0.95", () => {
    const scores = hours.map((h) => 0.95 - 0.75 * Math.exp(-0.05 * h) + 0.015 * gauss());
    const fit = fitSaturatingExponential(hours, scores);
    expect(plateausBelowCriterion(fit, 0.85)).toBe(false);
    expect(timeToReach(fit, 0.85)).toBeGreaterThan(0);
  });
});

import { inverse, Matrix, solve } from "ml-matrix";
import { describe, expect, it } from "vitest";
import {
  columnStandardizer,
  fitLinearModel,
  leaveOneOut,
  plannedHours,
  plannedHoursFromLogScale,
  ridgeByGcv,
  standardize,
} from "~/compute/regression";
import { seededGaussian } from "~/compute/seeded-random";
import { studentTCdf, studentTQuantile } from "~/compute/student-t";

/** Relative agreement |a − b| / |b|. */
const relativeError = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

// NIST Statistical Reference Datasets, linear regression, "Longley" (higher difficulty).
// Longley, J. W. (1967), JASA 62:819–841. Data and certified values from NIST StRD Longley.dat.
// Columns: y (total employment), x1 GNP deflator, x2 GNP, x3 unemployed, x4 armed forces, x5 population, x6 year.
const LONGLEY = [
  [60323, 83.0, 234289, 2356, 1590, 107608, 1947],
  [61122, 88.5, 259426, 2325, 1456, 108632, 1948],
  [60171, 88.2, 258054, 3682, 1616, 109773, 1949],
  [61187, 89.5, 284599, 3351, 1650, 110929, 1950],
  [63221, 96.2, 328975, 2099, 3099, 112075, 1951],
  [63639, 98.1, 346999, 1932, 3594, 113270, 1952],
  [64989, 99.0, 365385, 1870, 3547, 115094, 1953],
  [63761, 100.0, 363112, 3578, 3350, 116219, 1954],
  [66019, 101.2, 397469, 2904, 3048, 117388, 1955],
  [67857, 104.6, 419180, 2822, 2857, 118734, 1956],
  [68169, 108.4, 442769, 2936, 2798, 120445, 1957],
  [66513, 110.8, 444546, 4681, 2637, 121950, 1958],
  [68655, 112.6, 482704, 3813, 2552, 123366, 1959],
  [69564, 114.2, 502601, 3931, 2514, 125368, 1960],
  [69331, 115.7, 518173, 4806, 2572, 127852, 1961],
  [70551, 116.9, 554894, 4007, 2827, 130081, 1962],
];
// Certified values, NIST StRD Longley.dat.
const LONGLEY_COEFFICIENTS = [
  -3482258.63459582, 15.0618722713733, -0.35819179292591e-1, -2.02022980381683, -1.03322686717359,
  -0.511041056535807e-1, 1829.15146461355,
];
const LONGLEY_STANDARD_ERRORS = [
  890420.383607373, 84.9149257747669, 0.334910077722432e-1, 0.488399681651699, 0.214274163161675, 0.22607320006937,
  455.478499142212,
];
const LONGLEY_RESIDUAL_SD = 304.854073561965;
const LONGLEY_R_SQUARED = 0.995479004577296;

describe("fitLinearModel against NIST StRD Longley", () => {
  const y = LONGLEY.map((r) => r[0]);
  const X = LONGLEY.map((r) => r.slice(1));
  const fit = fitLinearModel(X, y);

  // The DESIGN bar is 7 significant digits (relative error < 1e-7); we hold the QR to 1e-9.
  it("reproduces all 7 certified coefficients", () => {
    expect(fit.coefficients).toHaveLength(7);
    fit.coefficients.forEach((b, j) => {
      expect(relativeError(b, LONGLEY_COEFFICIENTS[j])).toBeLessThan(1e-9);
    });
  });

  it("reproduces all 7 certified standard errors", () => {
    fit.standardErrors.forEach((se, j) => {
      expect(relativeError(se, LONGLEY_STANDARD_ERRORS[j])).toBeLessThan(1e-9);
    });
  });

  it("reproduces the certified residual SD, R² and 9 residual degrees of freedom", () => {
    expect(relativeError(fit.residualSD, LONGLEY_RESIDUAL_SD)).toBeLessThan(1e-9);
    expect(relativeError(fit.rSquared, LONGLEY_R_SQUARED)).toBeLessThan(1e-9);
    expect(fit.dfResidual).toBe(9); // NIST: 16 observations − 7 parameters
  });

  it("predicts the 1947 record to its certified residual (y − ŷ = 267.340029759711)", () => {
    // First residual of the certified fit, as published with the NIST results (and reproduced by R's lm).
    const residual = y[0] - fit.predict(X[0]);
    expect(relativeError(residual, 267.340029759711)).toBeLessThan(1e-7);
  });
});

describe("Student t quantiles against a published table", () => {
  // NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.2 "Critical values of the Student's t
  // distribution" (upper-tail table, 3 decimals); the same figures appear in Fisher & Yates, Statistical Tables.
  const table: [number, number, number][] = [
    // [probability, df, tabled value]
    [0.975, 10, 2.228],
    [0.9, 20, 1.325],
    [0.95, 5, 2.015],
    [0.99, 1, 31.821],
    [0.995, 30, 2.75],
    [0.9, 10, 1.372],
    [0.975, 20, 2.086],
  ];
  it.each(table)("t(%s, %s) = %s", (p, df, tabled) => {
    expect(Math.abs(studentTQuantile(p, df) - tabled)).toBeLessThanOrEqual(0.0005);
  });
});

describe("prediction interval against the textbook formula for simple regression", () => {
  // Draper & Smith (1998), Applied Regression Analysis, 3rd ed., §3.1: for one predictor the interval for a
  // new observation at x₀ is ŷ₀ ± t_{n−2} · s · √(1 + 1/n + (x₀ − x̄)²/Sxx). Computed here by hand sums.
  const x = [1, 2, 3, 4, 5, 6, 7, 8];
  const y = [2.1, 3.9, 6.2, 7.8, 10.1, 12.2, 13.8, 16.1];
  const n = x.length;
  const xbar = x.reduce((s, v) => s + v, 0) / n;
  const ybar = y.reduce((s, v) => s + v, 0) / n;
  const sxx = x.reduce((s, v) => s + (v - xbar) ** 2, 0);
  const sxy = x.reduce((s, v, i) => s + (v - xbar) * (y[i] - ybar), 0);
  const slope = sxy / sxx;
  const intercept = ybar - slope * xbar;
  const rss = x.reduce((s, v, i) => s + (y[i] - intercept - slope * v) ** 2, 0);
  const s = Math.sqrt(rss / (n - 2));

  it("matches ŷ ± t·s·√(1 + 1/n + (x₀ − x̄)²/Sxx) at x₀ = 10", () => {
    const fit = fitLinearModel(
      x.map((v) => [v]),
      y,
    );
    const x0 = 10;
    const half = studentTQuantile(0.975, n - 2) * s * Math.sqrt(1 + 1 / n + (x0 - xbar) ** 2 / sxx);
    const pi = fit.predictionInterval([x0], 0.95);
    expect(pi.fit).toBeCloseTo(intercept + slope * x0, 12);
    expect(pi.lower).toBeCloseTo(intercept + slope * x0 - half, 12);
    expect(pi.upper).toBeCloseTo(intercept + slope * x0 + half, 12);
    expect(fit.coefficients[0]).toBeCloseTo(intercept, 12);
    expect(fit.coefficients[1]).toBeCloseTo(slope, 12);
    // Standard error of the slope: s/√Sxx (Draper & Smith 1998, §1.4).
    expect(fit.standardErrors[1]).toBeCloseTo(s / Math.sqrt(sxx), 12);
  });

  it("without intercept: slope Σxy/Σx², SE s/√Σx², uncentred R² (Draper & Smith 1998, §3.4)", () => {
    const fit = fitLinearModel(
      x.map((v) => [v]),
      y,
      { intercept: false },
    );
    const sxx0 = x.reduce((a, v) => a + v * v, 0);
    const b = x.reduce((a, v, i) => a + v * y[i], 0) / sxx0;
    const rss0 = x.reduce((a, v, i) => a + (y[i] - b * v) ** 2, 0);
    expect(fit.coefficients).toHaveLength(1);
    expect(fit.coefficients[0]).toBeCloseTo(b, 12);
    expect(fit.standardErrors[0]).toBeCloseTo(Math.sqrt(rss0 / (n - 1)) / Math.sqrt(sxx0), 12);
    expect(fit.rSquared).toBeCloseTo(1 - rss0 / y.reduce((a, v) => a + v * v, 0), 12);
    expect(fit.dfResidual).toBe(n - 1);
  });
});

/** Synthetic cohort from known coefficients with Gaussian noise (seeded, Box–Muller). */
function syntheticCohort(seed: number, n: number, beta: number[], sigma: number) {
  const gauss = seededGaussian(seed);
  const X: number[][] = [];
  const y: number[] = [];
  for (let i = 0; i < n; i++) {
    const row = beta.slice(1).map(() => gauss());
    X.push(row);
    y.push(beta[0] + row.reduce((s, v, j) => s + v * beta[j + 1], 0) + sigma * gauss());
  }
  return { X, y };
}

describe("recovery of known coefficients and LOOCV interval coverage", () => {
  // Ground truth is the generating model itself: y = Xβ + ε, ε ~ N(0, σ²). Under that model the
  // leave-one-out t interval is an exact 80 % predictive interval for the held-out record.
  const beta = [1.8, 0.35, -0.2, 0.1, 0.05];
  const sigma = 0.3;
  const replicates = 200;
  const n = 40;
  const estimates: number[][] = [];
  const reportedSE: number[][] = [];
  let covered = 0;
  let total = 0;
  for (let r = 0; r < replicates; r++) {
    const { X, y } = syntheticCohort(1000 + r, n, beta, sigma);
    const fit = fitLinearModel(X, y);
    estimates.push(fit.coefficients);
    reportedSE.push(fit.standardErrors);
    const loo = leaveOneOut(X, y, { level: 0.8 });
    covered += loo.coverage * n;
    total += n;
  }

  it("LOOCV 80 % intervals cover 0.80 ± 0.05 of held-out records", () => {
    const coverage = covered / total;
    expect(coverage).toBeGreaterThan(0.75);
    expect(coverage).toBeLessThan(0.85);
  });

  it("coefficients are recovered without bias and their SEs match the spread over replicates", () => {
    beta.forEach((b, j) => {
      const values = estimates.map((e) => e[j]);
      const mean = values.reduce((s, v) => s + v, 0) / replicates;
      const sd = Math.sqrt(values.reduce((s, v) => s + (v - mean) ** 2, 0) / (replicates - 1));
      const meanSE = reportedSE.reduce((s, e) => s + e[j], 0) / replicates;
      // Mean within 4 Monte Carlo standard errors of the truth.
      expect(Math.abs(mean - b)).toBeLessThan((4 * sd) / Math.sqrt(replicates));
      // Reported SE agrees with the empirical SD within 15 %.
      expect(meanSE / sd).toBeGreaterThan(0.85);
      expect(meanSE / sd).toBeLessThan(1.15);
    });
  });
});

describe("leaveOneOut fast path equals brute-force refitting", () => {
  const { X, y } = syntheticCohort(42, 15, [2, 0.5, -0.3, 0.2], 0.4);

  it("OLS: held-out predictions and 80 % intervals agree to 1e-9", () => {
    const fast = leaveOneOut(X, y, { level: 0.8 });
    expect(fast.method).toBe("hat-matrix");
    let absSum = 0;
    let covered = 0;
    for (let i = 0; i < y.length; i++) {
      const fit = fitLinearModel(
        X.filter((_, r) => r !== i),
        y.filter((_, r) => r !== i),
      );
      const pi = fit.predictionInterval(X[i], 0.8);
      expect(Math.abs(fast.predictions[i] - pi.fit)).toBeLessThan(1e-9);
      expect(Math.abs(fast.lower[i] - pi.lower)).toBeLessThan(1e-9);
      expect(Math.abs(fast.upper[i] - pi.upper)).toBeLessThan(1e-9);
      absSum += Math.abs(y[i] - pi.fit);
      if (y[i] >= pi.lower && y[i] <= pi.upper) covered++;
    }
    expect(fast.mae).toBeCloseTo(absSum / y.length, 10);
    expect(fast.coverage).toBe(covered / y.length);
  });

  it("logOutcome: maeHours = mean |exp(ŷ_(i)) − exp(y_i)|", () => {
    const loo = leaveOneOut(X, y, { logOutcome: true });
    const expected = y.reduce((s, v, i) => s + Math.abs(Math.exp(loo.predictions[i]) - Math.exp(v)), 0) / y.length;
    expect(loo.maeHours).toBeCloseTo(expected, 10);
  });

  it("ridge: refit predictions equal the closed-form PRESS identity e_i/(1 − h_ii)", () => {
    const lambda = 2;
    const loo = leaveOneOut(X, y, { ridge: lambda });
    expect(loo.method).toBe("refit");
    // Independent hat matrix: H = 11ᵀ/n + Xc(XcᵀXc + λI)⁻¹Xcᵀ on centred data.
    const { Xc, yc, n, k } = centred(X, y);
    const A = Xc.transpose().mmul(Xc).add(Matrix.eye(k).mul(lambda));
    const H = Xc.mmul(inverse(A)).mmul(Xc.transpose());
    const b = solve(A, Xc.transpose().mmul(yc));
    const fitted = Xc.mmul(b);
    for (let i = 0; i < n; i++) {
      const h = 1 / n + H.get(i, i);
      const e = yc.get(i, 0) - fitted.get(i, 0);
      expect(Math.abs(y[i] - e / (1 - h) - loo.predictions[i])).toBeLessThan(1e-9);
    }
  });
});

function centred(X: number[][], y: number[]) {
  const n = X.length;
  const k = X[0].length;
  const means = Array.from({ length: k }, (_, j) => X.reduce((s, r) => s + r[j], 0) / n);
  const ybar = y.reduce((s, v) => s + v, 0) / n;
  const Xc = new Matrix(X.map((r) => r.map((v, j) => v - means[j])));
  const yc = Matrix.columnVector(y.map((v) => v - ybar));
  return { Xc, yc, n, k, means, ybar };
}

describe("ridge against the closed-form solution (XcᵀXc + λI)⁻¹Xcᵀyc", () => {
  // Hoerl & Kennard (1970), Technometrics 12:55–67: b(λ) = (XᵀX + λI)⁻¹Xᵀy on centred data, intercept ȳ − x̄ᵀb,
  // covariance σ²(XᵀX + λI)⁻¹XᵀX(XᵀX + λI)⁻¹. Computed independently here with ml-matrix solve/inverse.
  const { X, y } = syntheticCohort(7, 25, [1, 0.8, -0.5, 0.3], 0.5);
  const lambda = 3;
  const fit = fitLinearModel(X, y, { ridge: lambda });
  const { Xc, yc, n, k, means, ybar } = centred(X, y);
  const XtX = Xc.transpose().mmul(Xc);
  const A = XtX.clone().add(Matrix.eye(k).mul(lambda));
  const Ainv = inverse(A);
  const b = solve(A, Xc.transpose().mmul(yc)).to1DArray();
  const b0 = ybar - b.reduce((s, v, j) => s + v * means[j], 0);

  it("coefficients agree to 1e-10", () => {
    expect(Math.abs(fit.coefficients[0] - b0)).toBeLessThan(1e-10);
    b.forEach((v, j) => {
      expect(Math.abs(fit.coefficients[j + 1] - v)).toBeLessThan(1e-10);
    });
  });

  it("df = n − 1 − tr(Xc(XcᵀXc + λI)⁻¹Xcᵀ) and sandwich standard errors agree", () => {
    const trace = XtX.mmul(Ainv).trace();
    expect(fit.dfResidual).toBeCloseTo(n - 1 - trace, 10);
    const resid = y.map((v, i) => v - b0 - X[i].reduce((s, x, j) => s + x * b[j], 0));
    const sigma2 = resid.reduce((s, e) => s + e * e, 0) / (n - 1 - trace);
    const cov = Ainv.mmul(XtX).mmul(Ainv).mul(sigma2);
    for (let j = 0; j < k; j++) {
      expect(relativeError(fit.standardErrors[j + 1], Math.sqrt(cov.get(j, j)))).toBeLessThan(1e-9);
    }
    expect(relativeError(fit.residualSD, Math.sqrt(sigma2))).toBeLessThan(1e-12);
  });

  it("a vanishing penalty gives the OLS fit back", () => {
    const ols = fitLinearModel(X, y);
    const tiny = fitLinearModel(X, y, { ridge: 1e-12 });
    ols.coefficients.forEach((c, j) => {
      expect(Math.abs(tiny.coefficients[j] - c)).toBeLessThan(1e-9);
    });
    expect(tiny.dfResidual).toBeCloseTo(ols.dfResidual, 9);
  });
});

describe("plannedHours on a log(hours) model", () => {
  const { X, y } = syntheticCohort(11, 30, [Math.log(20), 0.3, -0.2], 0.35);
  const fit = fitLinearModel(X, y);
  const x = [0.5, -1];
  const planned = plannedHours(fit, x, { quantile: 0.8, level: 0.8 });

  it("median is exp(fit) and the planning figure is the 80th percentile of the log-t predictive", () => {
    const { mean, scale, df } = fit.predictiveDistribution(x);
    expect(planned.medianHours).toBeCloseTo(Math.exp(mean), 10);
    // Checked through the t CDF (jStat's incomplete beta), not the quantile function used inside.
    // (jStat inverts the t CDF to about 1e-9, hence 7 decimals.)
    expect(studentTCdf((Math.log(planned.planningHours) - mean) / scale, df)).toBeCloseTo(0.8, 7);
    expect(studentTCdf((Math.log(planned.lowerHours) - mean) / scale, df)).toBeCloseTo(0.1, 7);
    expect(studentTCdf((Math.log(planned.upperHours) - mean) / scale, df)).toBeCloseTo(0.9, 7);
    expect(planned.planningHours).toBeGreaterThan(planned.medianHours);
  });

  it("plannedHoursFromLogScale: a hand-computed case, log mean ln 20, scale 0.5, df 10", () => {
    // t(0.90, 10) = 1.372 (NIST/SEMATECH e-Handbook §1.3.6.7.2); t(0.80, 10) = 0.879 from a t table with an
    // upper-tail 0.20 column (e.g. Montgomery & Runger, Applied Statistics and Probability for Engineers,
    // appendix t table) — from memory.
    const p = plannedHoursFromLogScale(Math.log(20), 0.5, 10);
    expect(p.medianHours).toBeCloseTo(20, 10);
    expect(p.planningHours).toBeCloseTo(20 * Math.exp(0.5 * 0.879), 1);
    expect(p.upperHours).toBeCloseTo(20 * Math.exp(0.5 * 1.372), 1);
    expect(p.lowerHours).toBeCloseTo(20 * Math.exp(-0.5 * 1.372), 1);
  });
});

describe("standardize", () => {
  it("gives z-scores with the sample SD (n − 1): [2, 4, 6] → [−1, 0, 1]", () => {
    // mean 4, sample SD √((4 + 0 + 4)/2) = 2 (hand computation).
    const { Z, means, sds } = standardize([[2], [4], [6]]);
    expect(means[0]).toBe(4);
    expect(sds[0]).toBe(2);
    expect(Z.map((r) => r[0])).toEqual([-1, 0, 1]);
    expect(columnStandardizer([[2], [4], [6]]).apply([8])).toEqual([2]);
  });
});

describe("input checks", () => {
  it("refuses linearly dependent measures and too few records", () => {
    expect(() =>
      fitLinearModel(
        [
          [1, 2],
          [2, 4],
          [3, 6],
          [4, 8],
        ],
        [1, 2, 3, 5],
      ),
    ).toThrow(/linearly dependent/);
    expect(() => fitLinearModel([[1], [2]], [1, 2])).toThrow(/more records than parameters/);
    expect(() => fitLinearModel([[1], [1], [1]], [1, 2, 3])).toThrow(/constant/);
  });
});

describe("ridge penalty by generalised cross-validation (Golub, Heath & Wahba 1979)", () => {
  // GCV(λ) = n·RSS(λ)/(n − tr H(λ))², evaluated here directly: H = 11ᵀ/n + Xc(XcᵀXc + λI)⁻¹Xcᵀ built with
  // ml-matrix's inverse, RSS = ‖(I − H)y‖². Independent of the SVD shortcut in ridgeByGcv.
  function directGcv(X: number[][], y: number[], lambda: number) {
    const { Xc, n, k } = centred(X, y);
    const H = Xc.mmul(inverse(Xc.transpose().mmul(Xc).add(Matrix.eye(k).mul(lambda)))).mmul(Xc.transpose());
    H.add(Matrix.ones(n, n).div(n));
    const r = Matrix.columnVector(y).sub(H.mmul(Matrix.columnVector(y)));
    const rss = r.to1DArray().reduce((s, v) => s + v * v, 0);
    return (n * rss) / (n - H.trace()) ** 2;
  }
  // Few records, many nearly collinear measures: the case ridge is for.
  const gauss = seededGaussian(91);
  const base = syntheticCohort(90, 18, [1, 0.6, -0.4, 0.2, 0, 0.1, 0], 0.6);
  const X = base.X.map((r) => [...r, r[0] + 0.05 * gauss(), r[1] - r[2] + 0.05 * gauss()]);
  const y = base.y;
  const choice = ridgeByGcv(X, y);

  it("the GCV path equals the direct evaluation at every grid point (1e-9 relative)", () => {
    const points = choice.path.filter((_, i) => i % 10 === 0);
    expect(points.length).toBeGreaterThan(10);
    for (const p of points) expect(relativeError(p.gcv, directGcv(X, y, p.lambda))).toBeLessThan(1e-9);
    expect(relativeError(choice.gcv, directGcv(X, y, choice.lambda))).toBeLessThan(1e-9);
  });

  it("the chosen λ minimises the direct GCV over a fine independent grid", () => {
    expect(choice.lambda).toBeGreaterThan(0);
    let bestDirect = directGcv(X, y, 0);
    for (let e = -6; e <= 4; e += 0.01) bestDirect = Math.min(bestDirect, directGcv(X, y, 10 ** e));
    expect(choice.gcv).toBeLessThanOrEqual(bestDirect * (1 + 1e-9));
    // And it is a local minimum: GCV rises 5 % either side in λ.
    expect(directGcv(X, y, choice.lambda * 1.05)).toBeGreaterThan(choice.gcv);
    expect(directGcv(X, y, choice.lambda / 1.05)).toBeGreaterThan(choice.gcv);
  });

  it('fitLinearModel(…, { ridge: "gcv" }) fits with that λ and its effective parameters', () => {
    const fit = fitLinearModel(X, y, { ridge: "gcv" });
    expect(fit.ridge).toBeCloseTo(choice.lambda, 12);
    expect(fit.effectiveParameters).toBeCloseTo(choice.effectiveParameters, 9);
    expect(fit.dfResidual).toBeCloseTo(y.length - choice.effectiveParameters, 9);
  });

  it("leave-one-out with GCV chooses λ again without the held-out record (the check includes the choice)", () => {
    const loo = leaveOneOut(X, y, { ridge: "gcv" });
    expect(loo.method).toBe("refit");
    const i = 4;
    const keepX = X.filter((_, r) => r !== i);
    const keepY = y.filter((_, r) => r !== i);
    const lambda = ridgeByGcv(keepX, keepY).lambda;
    expect(lambda).not.toBeCloseTo(choice.lambda, 6);
    expect(loo.predictions[i]).toBeCloseTo(fitLinearModel(keepX, keepY, { ridge: lambda }).predict(X[i]), 10);
  });

  it("well-determined data with many records leaves almost no penalty (GCV ≈ OLS)", () => {
    const big = syntheticCohort(92, 400, [1, 0.6, -0.4, 0.2], 0.3);
    const c = ridgeByGcv(big.X, big.y);
    expect(c.effectiveParameters).toBeGreaterThan(3.95); // OLS: 4 (intercept + 3)
  });
});

import { describe, expect, it } from "vitest";
import { chooseProgressCurve, curveScore, fitPowerFunction, fitPowerLaw, timeToReach } from "~/compute/curve";
import { aicc, akaikeWeights, leastSquaresAic } from "~/compute/model-selection";
import { seededGaussian } from "~/compute/seeded-random";

const relativeError = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

// NIST StRD nonlinear regression "DanWood" (lower difficulty). Daniel, C. & Wood, F. S. (1980), Fitting
// Equations to Data, 2nd ed., pp. 428–431. Model y = b1·x^b2; data and certified values from NIST StRD
// DanWood.dat (6 observations, typed in here).
const DANWOOD_X = [1.309, 1.471, 1.49, 1.565, 1.611, 1.68];
const DANWOOD_Y = [2.138, 3.421, 3.597, 4.34, 4.882, 5.66];
const DANWOOD = {
  b1: 7.6886226176e-1,
  b2: 3.8604055871,
  se1: 1.828197386e-2,
  se2: 5.1726610913e-2,
  residualSS: 4.3173084083e-3,
  residualSD: 3.2853114039e-2,
};

describe("fitPowerFunction against NIST StRD DanWood (level fixed at 0, no offset)", () => {
  it.each([
    ["NIST start 1 (b1 = 1, b2 = 5)", { scale: 1, exponent: 5 }],
    ["NIST start 2 (b1 = 0.7, b2 = 4)", { scale: 0.7, exponent: 4 }],
    ["automatic start", undefined],
  ] as const)("converges from %s to the certified values", (_label, initial) => {
    const fit = fitPowerFunction(DANWOOD_X, DANWOOD_Y, { fixLevel: 0, initial });
    expect(fit.converged).toBe(true);
    expect(relativeError(fit.scale, DANWOOD.b1)).toBeLessThan(1e-7);
    expect(relativeError(fit.exponent, DANWOOD.b2)).toBeLessThan(1e-7);
    expect(relativeError(fit.residualSS, DANWOOD.residualSS)).toBeLessThan(1e-7);
    expect(relativeError(fit.residualSD, DANWOOD.residualSD)).toBeLessThan(1e-7);
    expect(relativeError(fit.standardErrors.scale, DANWOOD.se1)).toBeLessThan(1e-5);
    expect(relativeError(fit.standardErrors.exponent, DANWOOD.se2)).toBeLessThan(1e-5);
    expect(fit.dfResidual).toBe(4); // NIST: 6 observations − 2 parameters
  });
  it("refuses x + offset ≤ 0 by naming the point", () => {
    expect(() => fitPowerFunction([1, 0, 2], [1, 2, 3], { fixLevel: 0 })).toThrow(/point 1 has x = 0/);
    expect(() => fitPowerFunction([1, 2], [1, 2, 3])).toThrow(/x has 2 values but y has 3/);
    expect(() => fitPowerFunction([1, 2], [1, 2])).toThrow(/need at least 3 points/);
  });
});

describe("fitPowerLaw: the progress curve score = a − (a − s)(1 + h)^(−c)", () => {
  const truth = { kind: "power" as const, asymptote: 0.93, start: 0.25, rate: 0.6 };
  const hours = Array.from({ length: 25 }, (_, i) => 1.2 * (i + 1));
  it("recovers a simulated power-law learner and maps the covariance (SE of start = √(var level + var scale + 2 cov))", () => {
    const gauss = seededGaussian(41);
    const scores = hours.map((h) => curveScore(truth, h) + 0.01 * gauss());
    const fit = fitPowerLaw(hours, scores);
    expect(fit.converged).toBe(true);
    expect(Math.abs(fit.asymptote - truth.asymptote)).toBeLessThan(3 * fit.standardErrors.asymptote);
    expect(Math.abs(fit.rate - truth.rate)).toBeLessThan(3 * fit.standardErrors.rate);
    const raw = fitPowerFunction(hours, scores, { offset: 1 });
    const [[vl, clS], [, vs]] = raw.covariance;
    expect(fit.standardErrors.start).toBeCloseTo(Math.sqrt(vl + vs + 2 * clS), 12);
    expect(fit.start).toBeCloseTo(raw.level + raw.scale, 12);
  });
  it("time to reach: ((a − s)/(a − T))^(1/c) − 1 — a 0.9, s 0.3, c 0.5, T 0.8 → 6² − 1 = 35 h (hand computation)", () => {
    const fit = { kind: "power" as const, asymptote: 0.9, start: 0.3, rate: 0.5 };
    expect(timeToReach(fit, 0.8)).toBeCloseTo(35, 12);
    expect(curveScore(fit, 35)).toBeCloseTo(0.8, 14);
  });
});

describe("AICc (Burnham & Anderson 2002, ch. 2: AICc = AIC + 2K(K + 1)/(n − K − 1))", () => {
  it("hand-worked: n = 10, RSS = 2, K = 4 → AIC = 10·ln 0.2 + 8 = −8.0944, AICc = AIC + 40/5 = −0.0944", () => {
    const aic = leastSquaresAic(2, 10, 4);
    expect(aic).toBeCloseTo(10 * Math.log(0.2) + 8, 12);
    expect(aic).toBeCloseTo(-8.09438, 5);
    expect(aicc(aic, 10, 4)).toBeCloseTo(-0.09438, 5);
  });
  it("Akaike weights: Δ = 0 and 2 give e⁰/(e⁰ + e⁻¹) = 0.7311 and 0.2689 (hand computation)", () => {
    const w = akaikeWeights([5, 7]);
    expect(w[0]).toBeCloseTo(1 / (1 + Math.exp(-1)), 12);
    expect(w[1]).toBeCloseTo(0.268941, 6);
  });
  it("refuses n ≤ K + 1 and a non-positive RSS", () => {
    expect(() => aicc(0, 5, 4)).toThrow(/AICc needs n > K \+ 1/);
    expect(() => leastSquaresAic(0, 10, 4)).toThrow(/residual sum of squares must be > 0/);
  });
});

describe("chooseProgressCurve", () => {
  const hours = Array.from({ length: 20 }, (_, i) => 1.5 * (i + 1));
  it("picks the power law for power-law data and the exponential for exponential data, by AICc", () => {
    const g1 = seededGaussian(5);
    const power = chooseProgressCurve(
      hours,
      hours.map((h) => curveScore({ kind: "power", asymptote: 0.95, start: 0.2, rate: 0.5 }, h) + 0.005 * g1()),
    );
    expect(power.fit.kind).toBe("power");
    expect(power.basis).toBe("lower AICc");
    const g2 = seededGaussian(6);
    const exponential = chooseProgressCurve(
      hours,
      hours.map((h) => curveScore({ asymptote: 0.95, start: 0.2, rate: 0.1 }, h) + 0.005 * g2()),
    );
    expect(exponential.fit.kind).toBe("exponential");
    // The two AICc values recomputed from each candidate's RSS (n = 20, K = 4).
    for (const c of exponential.candidates) {
      expect(c.aicc).toBeCloseTo(20 * Math.log(c.residualSS / 20) + 8 + 40 / 15, 10);
    }
    const [we, wp] = exponential.candidates.map((c) => c.weight as number);
    expect(we + wp).toBeCloseTo(1, 14);
    expect(we).toBeGreaterThan(wp);
  });
  it("a fit that bends upwards (rate ≤ 0) is not a learning curve and is never used", () => {
    // Scores rising slightly faster than linearly: the power law fits it with a negative rate.
    const x = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10];
    const y = x.map((h) => 0.3 + 0.004 * h ** 1.6);
    const c = chooseProgressCurve(x, y);
    const power = c.candidates.find((k) => k.kind === "power");
    expect(fitPowerLaw(x, y).rate).toBeLessThan(0);
    expect(power?.aicc).toBeNull();
    expect(c.fit.kind === "power" && c.fit.converged).toBe(false);
    if (c.fit.converged) expect(c.fit.rate).toBeGreaterThan(0);
  });

  it("with 5 sessions AICc is undefined for K = 4 and the exponential is kept, saying why", () => {
    const few = chooseProgressCurve([1, 2, 3, 4, 5], [0.3, 0.45, 0.55, 0.62, 0.66]);
    expect(few.fit.kind).toBe("exponential");
    expect(few.basis).toMatch(/too few sessions to compare curves/);
    expect(few.candidates.every((c) => c.aicc === null)).toBe(true);
  });
});

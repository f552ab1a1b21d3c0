import { describe, expect, it } from "vitest";
import type { CurveFit } from "~/compute/curve";
import { chiSquare, simulatedQuantile, simulateRemaining } from "~/compute/proficiency-simulation";
import { gaussianSource, mulberry32 } from "~/compute/seeded-random";
import { normalQuantile } from "~/compute/student-t";

// A flat curve at score p with noise σ: each session is at or above the criterion T independently with
// probability q = Φ((p − T)/σ). The number of sessions to the first run of k successes has mean
// (1 − q^k)/((1 − q)·q^k) (Feller, An Introduction to Probability Theory and Its Applications, vol. 1,
// 3rd ed., §XIII.7, success runs). Its whole distribution is computed here independently by the Markov
// chain on the current run length (0 … k − 1).
function flatFit(level: number, sigma: number): CurveFit {
  return {
    kind: "exponential",
    asymptote: level,
    start: level,
    rate: 1,
    standardErrors: { asymptote: 0, start: 0, rate: 0 },
    residualSS: 0,
    converged: true,
    iterations: 0,
    n: 1000,
    dfResidual: 997,
    residualSD: sigma,
    startFixed: false,
    parameterNames: ["asymptote", "start", "rate"],
    covariance: [
      [0, 0, 0],
      [0, 0, 0],
      [0, 0, 0],
    ],
  };
}

/** P(N ≤ n) for n = 1 … maxN by the run-length Markov chain, starting with a run of `run0`. */
function exactCdf(q: number, k: number, run0: number, maxN: number): number[] {
  let state = new Array<number>(k).fill(0);
  state[run0] = 1;
  let absorbed = 0;
  const cdf: number[] = [];
  for (let n = 1; n <= maxN; n++) {
    const next = new Array<number>(k).fill(0);
    for (let r = 0; r < k; r++) {
      next[0] += state[r] * (1 - q);
      if (r + 1 === k) absorbed += state[r] * q;
      else next[r + 1] += state[r] * q;
    }
    state = next;
    cdf.push(absorbed);
  }
  return cdf;
}

const fellerMean = (q: number, k: number) => (1 - q ** k) / ((1 - q) * q ** k);

describe("simulateRemaining: the k-in-a-row rule against the exact waiting time (Feller)", () => {
  const threshold = 0.8;
  const sigma = 0.05;
  const q = 0.7;
  const level = threshold + sigma * normalQuantile(q); // Φ((p − T)/σ) = q
  const k = 3;
  const sim = simulateRemaining({
    fit: flatFit(level, sigma),
    criterion: { scoreThreshold: threshold, consecutiveSessions: k },
    hoursDone: 10,
    sessionHours: 1,
    loggedScores: [0.5],
    draws: 20000,
    seed: 7,
    parameterUncertainty: false,
  });

  it("simulated mean sessions = (1 − q^k)/((1 − q)q^k) = 6.385 for q = 0.7, k = 3 (within 4 standard errors)", () => {
    expect(fellerMean(q, k)).toBeCloseTo(0.657 / (0.3 * 0.343), 12); // hand computation
    expect(sim.reachedShare).toBe(1);
    const n = sim.remainingHours.length;
    const mean = sim.remainingHours.reduce((s, v) => s + v, 0) / n;
    const sd = Math.sqrt(sim.remainingHours.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1));
    expect(Math.abs(mean - fellerMean(q, k))).toBeLessThan((4 * sd) / Math.sqrt(n));
  });

  it("simulated quantiles match the exact distribution (Markov chain) at 10 … 90 %", () => {
    const cdf = exactCdf(q, k, 0, 200);
    for (const p of [0.1, 0.25, 0.5, 0.75, 0.8, 0.9]) {
      const exact = cdf.findIndex((c) => c >= p) + 1;
      const simulated = simulatedQuantile(sim, p) as number;
      // Discrete distribution: the simulated quantile may sit one session off where the CDF is within
      // sampling error (SE of a share ≈ 0.0035 at 20,000 draws) of p.
      expect(Math.abs(simulated - exact)).toBeLessThanOrEqual(1);
      if (simulated !== exact) expect(Math.abs(cdf[Math.min(simulated, exact) - 1] - p)).toBeLessThan(0.015);
    }
    // The share done within 3 sessions is q³ = 0.343 exactly.
    const within3 = sim.remainingHours.filter((h) => h <= 3).length / sim.draws;
    expect(Math.abs(within3 - q ** 3)).toBeLessThan(4 * Math.sqrt((0.343 * 0.657) / sim.draws));
  });

  it("a run in progress counts: with 2 of 3 already above the criterion, P(done next session) = q", () => {
    const s = simulateRemaining({
      fit: flatFit(level, sigma),
      criterion: { scoreThreshold: threshold, consecutiveSessions: k },
      hoursDone: 10,
      sessionHours: 1.5,
      loggedScores: [0.5, 0.85, 0.82],
      draws: 20000,
      seed: 8,
      parameterUncertainty: false,
    });
    const exact = exactCdf(q, k, 2, 200);
    const first = s.remainingHours.filter((h) => h === 1.5).length / s.draws;
    expect(exact[0]).toBeCloseTo(q, 14);
    expect(Math.abs(first - q)).toBeLessThan(4 * Math.sqrt((q * (1 - q)) / s.draws));
    // Remaining hours are whole sessions of 1.5 h.
    expect(s.remainingHours.every((h) => Number.isInteger(h / 1.5))).toBe(true);
  });
});

describe("simulateRemaining: seeded determinism and input checks", () => {
  const fit = {
    ...flatFit(0.82, 0.05),
    covariance: [
      [1e-4, 0, 0],
      [0, 1e-4, 0],
      [0, 0, 1e-4],
    ],
    dfResidual: 8,
  };
  const base = {
    fit,
    criterion: { scoreThreshold: 0.8, consecutiveSessions: 2 },
    hoursDone: 5,
    sessionHours: 1,
    loggedScores: [0.6, 0.7],
    draws: 500,
  };
  it("the same seed gives the same draws; another seed other draws", () => {
    const a = simulateRemaining({ ...base, seed: 11 });
    const b = simulateRemaining({ ...base, seed: 11 });
    const c = simulateRemaining({ ...base, seed: 12 });
    expect(b.remainingHours).toEqual(a.remainingHours);
    expect(c.remainingHours).not.toEqual(a.remainingHours);
    expect(a.seed).toBe(11);
  });
  it("parameter uncertainty widens the spread (σ and θ drawn per course)", () => {
    const wide = simulateRemaining({ ...base, draws: 4000, seed: 3 });
    const narrow = simulateRemaining({ ...base, draws: 4000, seed: 3, parameterUncertainty: false });
    const spread = (s: typeof wide) => (simulatedQuantile(s, 0.9) as number) - (simulatedQuantile(s, 0.1) as number);
    expect(spread(wide)).toBeGreaterThan(spread(narrow));
  });
  it("refuses bad input with a message naming it", () => {
    expect(() => simulateRemaining({ ...base, sessionHours: 0 })).toThrow(/session length must be more than 0 hours/);
    expect(() => simulateRemaining({ ...base, sessionHours: -1 })).toThrow(/session length/);
    expect(() => simulateRemaining({ ...base, hoursDone: -2 })).toThrow(/hours done must be 0 or more/);
    expect(() => simulateRemaining({ ...base, draws: 0 })).toThrow(/draws must be a whole number/);
    expect(() => simulateRemaining({ ...base, loggedScores: [0.9, 0.95] })).toThrow(/already meet/);
    expect(() => simulateRemaining({ ...base, criterion: { scoreThreshold: 0.8, consecutiveSessions: 0 } })).toThrow(
      /consecutive sessions/,
    );
    expect(() => simulateRemaining({ ...base, fit: { ...fit, covariance: [[NaN]] } })).toThrow(/covariance/);
  });
  it("courses not done within the horizon make the upper quantiles unknown, never a made-up number", () => {
    const s = simulateRemaining({ ...base, fit: flatFit(0.6, 0.05), parameterUncertainty: false, maxSessions: 20 });
    expect(s.reachedShare).toBe(0);
    expect(simulatedQuantile(s, 0.5)).toBeNull();
  });
});

describe("chiSquare (Marsaglia & Tsang 2000 gamma sampler, χ²(df) = 2·Gamma(df/2))", () => {
  it.each([1, 3, 12])("χ²(%i) draws have mean df and variance 2·df (within 4 standard errors)", (df) => {
    const uniform = mulberry32(100 + df);
    const gauss = gaussianSource(uniform);
    const n = 40000;
    const draws = Array.from({ length: n }, () => chiSquare(df, uniform, gauss));
    const mean = draws.reduce((s, v) => s + v, 0) / n;
    const variance = draws.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1);
    expect(Math.abs(mean - df)).toBeLessThan(4 * Math.sqrt((2 * df) / n));
    // SE of the sample variance ≈ √((μ₄ − σ⁴)/n), with χ²'s fourth central moment μ₄ = 12·df·(df + 4).
    const seVariance = Math.sqrt((12 * df * (df + 4) - 4 * df * df) / n);
    expect(Math.abs(variance - 2 * df)).toBeLessThan(4 * seVariance);
    expect(draws.every((v) => v > 0)).toBe(true);
  });
});

import { describe, expect, it } from "vitest";
import { curveScore, fitSaturatingExponential, timeToReach } from "~/compute/curve";
import {
  combineRemainingHours,
  curveRemainingHours,
  inverseVarianceCombine,
  remainingFromBaseline,
} from "~/compute/forecast-combine";
import { seededGaussian } from "~/compute/seeded-random";
import { normalCdf } from "~/compute/student-t";

describe("inverseVarianceCombine", () => {
  // Normal–normal posterior with known variances (Gelman et al., Bayesian Data Analysis, 3rd ed., §2.5,
  // eq. 2.12): μ₁ = (μ₀/τ₀² + ȳ/σ²)/(1/τ₀² + 1/σ²), 1/τ₁² = 1/τ₀² + 1/σ².
  it("equal precisions: N(0, 1) and N(1, 1) give mean 0.5 and SD 1/√2", () => {
    const c = inverseVarianceCombine([
      { logMean: 0, logSD: 1 },
      { logMean: 1, logSD: 1 },
    ]);
    expect(c.logMean).toBeCloseTo(0.5, 15);
    expect(c.logSD).toBeCloseTo(Math.SQRT1_2, 15);
    expect(c.weights).toEqual([0.5, 0.5]);
  });
  it("SDs 0.2 and 0.4: weights 0.8 / 0.2 (precisions 25 and 6.25), SD 1/√31.25 (hand computation)", () => {
    const c = inverseVarianceCombine([
      { logMean: Math.log(40), logSD: 0.2 },
      { logMean: Math.log(20), logSD: 0.4 },
    ]);
    expect(c.weights[0]).toBeCloseTo(0.8, 14);
    expect(c.weights[1]).toBeCloseTo(0.2, 14);
    expect(c.logMean).toBeCloseTo(0.8 * Math.log(40) + 0.2 * Math.log(20), 14);
    expect(c.logSD).toBeCloseTo(1 / Math.sqrt(31.25), 14);
  });
});

describe("remainingFromBaseline", () => {
  it("with no hours done it returns the baseline unchanged (median e^μ, log SD σ)", () => {
    const r = remainingFromBaseline({ logMean: Math.log(30), logSD: 0.4 }, 0);
    expect(r.medianHours).toBeCloseTo(30, 10);
    expect(r.logSD).toBeCloseTo(0.4, 10);
    expect(r.beyondForecast).toBe(false);
  });

  it("matches a Monte Carlo of T − d given T > d for lognormal T (seeded Box–Muller)", () => {
    // Independent check by simulation: draw T = exp(μ + σZ), keep T > d, take T − d.
    const mu = Math.log(30);
    const sigma = 0.4;
    const done = 25;
    const gauss = seededGaussian(2024);
    const remaining: number[] = [];
    while (remaining.length < 40000) {
      const t = Math.exp(mu + sigma * gauss());
      if (t > done) remaining.push(t - done);
    }
    remaining.sort((a, b) => a - b);
    const at = (q: number) => remaining[Math.floor(q * remaining.length)];
    const r = remainingFromBaseline({ logMean: mu, logSD: sigma }, done);
    const simulatedLogSD = (Math.log(at(0.8413447460685429)) - Math.log(at(0.15865525393145707))) / 2;
    expect(Math.abs(r.medianHours - at(0.5)) / at(0.5)).toBeLessThan(0.02);
    expect(Math.abs(r.logSD - simulatedLogSD) / simulatedLogSD).toBeLessThan(0.03);
  });

  it("flags a trainee already past the baseline's 99th percentile", () => {
    // 99th percentile of lognormal(ln 30, 0.4) is 30·e^(0.4·2.326) ≈ 75.9 h.
    expect(remainingFromBaseline({ logMean: Math.log(30), logSD: 0.4 }, 80).beyondForecast).toBe(true);
    expect(remainingFromBaseline({ logMean: Math.log(30), logSD: 0.4 }, 70).beyondForecast).toBe(false);
  });
});

/** Sessions on a known curve with seeded noise. */
function sessions(truth: { asymptote: number; start: number; rate: number }, count: number, seed: number) {
  const gauss = seededGaussian(seed);
  const hours = Array.from({ length: count }, (_, i) => 2 * (i + 1));
  const scores = hours.map((h) => curveScore(truth, h) + 0.015 * gauss());
  return { hours, scores };
}

describe("curveRemainingHours", () => {
  it("remaining = time to reach − hours done; log SD = delta-method SD / remaining (d ln R = dt/R)", () => {
    const { hours, scores } = sessions({ asymptote: 0.95, start: 0.2, rate: 0.05 }, 12, 3);
    const fit = fitSaturatingExponential(hours, scores);
    const e = curveRemainingHours(fit, 0.85, 24);
    expect(e.status).toBe("estimate");
    if (e.status !== "estimate") return;
    const t = timeToReach(fit, 0.85) as number;
    expect(e.remainingHours).toBeCloseTo(t - 24, 10);
    // Finite-difference gradient of t(θ) checks the analytic delta-method gradient.
    const h = 1e-6;
    const names = ["asymptote", "start", "rate"] as const;
    const grad = names.map((name) => {
      const up = { ...fit, [name]: fit[name] + h * Math.abs(fit[name]) };
      const down = { ...fit, [name]: fit[name] - h * Math.abs(fit[name]) };
      return ((timeToReach(up, 0.85) as number) - (timeToReach(down, 0.85) as number)) / (2 * h * Math.abs(fit[name]));
    });
    let variance = 0;
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) variance += grad[i] * fit.covariance[i][j] * grad[j];
    expect(e.logSD).toBeCloseTo(Math.sqrt(variance) / (t - 24), 5);
  });

  it("too few sessions are not evidence", () => {
    const { hours, scores } = sessions({ asymptote: 0.95, start: 0.2, rate: 0.05 }, 4, 3);
    const fit = fitSaturatingExponential(hours, scores);
    expect(curveRemainingHours(fit, 0.85, 8).status).toBe("uninformative");
  });
});

describe("combineRemainingHours", () => {
  const prior = { logMean: Math.log(30), logSD: 0.45 };

  it("combines prior and curve by inverse variance and reports the 80th-percentile planning figure", () => {
    const { hours, scores } = sessions({ asymptote: 0.95, start: 0.2, rate: 0.05 }, 12, 3);
    const fit = fitSaturatingExponential(hours, scores);
    const out = combineRemainingHours({ prior, curve: { fit, threshold: 0.85, hoursDone: 24 } });
    expect(out.status).toBe("combined");
    const evidence = curveRemainingHours(fit, 0.85, 24);
    if (evidence.status !== "estimate") throw new Error("expected a curve estimate");
    // Gelman et al. (BDA3 §2.5) precision weighting, recomputed by hand here.
    const wp = 1 / prior.logSD ** 2;
    const wc = 1 / evidence.logSD ** 2;
    const mean = (wp * prior.logMean + wc * evidence.logMean) / (wp + wc);
    const sd = 1 / Math.sqrt(wp + wc);
    expect(out.logMean).toBeCloseTo(mean, 12);
    expect(out.logSD).toBeCloseTo(sd, 12);
    expect(out.weights.prior + out.weights.curve).toBeCloseTo(1, 14);
    expect(out.remainingHours).toBeCloseTo(Math.exp(mean), 10);
    // The planning figure sits at the 80th percentile of the combined log-normal (checked through Φ).
    expect(normalCdf((Math.log(out.planningHours as number) - mean) / sd)).toBeCloseTo(0.8, 7);
    expect(normalCdf((Math.log(out.interval!.upper) - mean) / sd)).toBeCloseTo(0.9, 7);
    // The combined estimate lies between the two inputs and is tighter than either.
    const lo = Math.min(prior.logMean, evidence.logMean);
    const hi = Math.max(prior.logMean, evidence.logMean);
    expect(out.logMean as number).toBeGreaterThanOrEqual(lo);
    expect(out.logMean as number).toBeLessThanOrEqual(hi);
    expect(out.logSD as number).toBeLessThan(Math.min(prior.logSD, evidence.logSD));
  });

  it("a plateau below the criterion returns a review flag and no extrapolated number", () => {
    const { hours, scores } = sessions({ asymptote: 0.62, start: 0.2, rate: 0.2 }, 12, 8);
    const fit = fitSaturatingExponential(hours, scores);
    const out = combineRemainingHours({ prior, curve: { fit, threshold: 0.85, hoursDone: 24 } });
    expect(out.status).toBe("review");
    expect(out.remainingHours).toBeNull();
    expect(out.planningHours).toBeNull();
    expect(out.interval).toBeNull();
    expect(out.reason).toMatch(/below the criterion/);
  });

  it("an uninformative curve leaves the prior as it is", () => {
    const { hours, scores } = sessions({ asymptote: 0.95, start: 0.2, rate: 0.05 }, 4, 3);
    const fit = fitSaturatingExponential(hours, scores);
    const out = combineRemainingHours({ prior, curve: { fit, threshold: 0.85, hoursDone: 8 } });
    expect(out.status).toBe("prior-only");
    expect(out.remainingHours).toBeCloseTo(30, 10);
    expect(out.weights).toEqual({ prior: 1, curve: 0 });
  });
});

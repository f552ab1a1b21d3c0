import { describe, expect, it } from "vitest";
import { curveScore, fitSaturatingExponential, timeToReach } from "~/compute/curve";
import {
  combineRemainingHours,
  curveRemainingHours,
  inverseVarianceCombine,
  remainingFromBaseline,
} from "~/compute/forecast-combine";
import { simulateRemaining } from "~/compute/proficiency-simulation";
import { seededGaussian } from "~/compute/seeded-random";
import { normalCdf, studentTQuantile } from "~/compute/student-t";

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

const criterion = { scoreThreshold: 0.85, consecutiveSessions: 3 };
const evidenceInput = (count: number, seed: number, truth = { asymptote: 0.95, start: 0.2, rate: 0.05 }) => {
  const { hours, scores } = sessions(truth, count, seed);
  return {
    fit: fitSaturatingExponential(hours, scores),
    criterion,
    hoursDone: hours[hours.length - 1],
    sessionHours: 2,
    loggedScores: scores,
  };
};

describe("curveRemainingHours", () => {
  it("summarises the simulated remaining hours on the log scale: median → logMean, Φ(±1) quantiles → logSD", () => {
    const input = evidenceInput(12, 3);
    const e = curveRemainingHours({ ...input, options: { seed: 5 } });
    expect(e.status).toBe("estimate");
    if (e.status !== "estimate") return;
    // Recomputed here from the simulation itself (same seed, default 2,000 draws), type-1 quantiles.
    const sim = simulateRemaining({ ...input, seed: 5 });
    const q = (p: number) => sim.remainingHours[Math.ceil(p * sim.draws) - 1];
    expect(e.remainingHours).toBe(q(0.5));
    expect(e.logMean).toBeCloseTo(Math.log(q(0.5)), 14);
    const spread = (Math.log(q(normalCdf(1))) - Math.log(q(normalCdf(-1)))) / 2;
    expect(e.logSD).toBeCloseTo(Math.max(spread, Math.log(1 + 2 / (2 * q(0.5)))), 14);
    expect(e.simulation).toMatchObject({ draws: 2000, seed: 5, sessionHours: 2, reachedShare: sim.reachedShare });
    // A few drawn curves level off below the criterion (asymptote uncertain after 12 sessions): they count
    // as not done within the horizon, never dropped.
    expect(sim.reachedShare).toBeGreaterThan(0.9);
    // Remaining hours come in whole sessions of 2 h.
    expect(Number.isInteger(e.remainingHours / 2)).toBe(true);
  });

  it("the k-in-a-row rule takes longer than the mean curve's crossing (the old, wrong event)", () => {
    const input = evidenceInput(12, 3);
    const e = curveRemainingHours(input);
    if (e.status !== "estimate") throw new Error("expected a curve estimate");
    const crossing = (timeToReach(input.fit, 0.85) as number) - input.hoursDone;
    expect(e.remainingHours).toBeGreaterThan(crossing);
  });

  it("too few sessions are not evidence", () => {
    expect(curveRemainingHours(evidenceInput(4, 3)).status).toBe("uninformative");
  });

  it("a non-positive session length is refused with a reason, not a number", () => {
    const e = curveRemainingHours({ ...evidenceInput(12, 3), sessionHours: 0 });
    expect(e).toEqual({ status: "uninformative", reason: "session length must be more than 0 hours, got 0" });
  });
});

describe("combineRemainingHours", () => {
  const prior = { logMean: Math.log(30), logSD: 0.45 };

  it("combines prior and curve by inverse variance and reports the 80th-percentile planning figure", () => {
    const input = evidenceInput(12, 3);
    const out = combineRemainingHours({ prior, curve: input });
    expect(out.status).toBe("combined");
    const evidence = curveRemainingHours(input);
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
    const out = combineRemainingHours({
      prior,
      curve: evidenceInput(12, 8, { asymptote: 0.62, start: 0.2, rate: 0.2 }),
    });
    expect(out.status).toBe("review");
    expect(out.remainingHours).toBeNull();
    expect(out.planningHours).toBeNull();
    expect(out.interval).toBeNull();
    expect(out.reason).toMatch(/below the criterion/);
  });

  it("an uninformative curve leaves the prior as it is", () => {
    const out = combineRemainingHours({ prior, curve: evidenceInput(4, 3) });
    expect(out.status).toBe("prior-only");
    expect(out.remainingHours).toBeCloseTo(30, 10);
    expect(out.weights).toEqual({ prior: 1, curve: 0 });
  });

  it("the prior alone keeps its Student t quantiles: 80th percentile e^(μ + σ·t₀.₈(5)) with t₀.₈(5) = 0.9195", () => {
    // t quantile from standard tables (e.g. R qt(0.8, 5) = 0.9195438).
    const t = remainingFromBaseline({ logMean: Math.log(30), logSD: 0.45, df: 5 }, 0);
    const out = combineRemainingHours({ prior: t, curve: null, reason: "no sessions yet" });
    expect(out.status).toBe("prior-only");
    expect(out.reason).toBe("no sessions yet");
    expect(out.planningHours).toBeCloseTo(30 * Math.exp(0.45 * 0.9195438), 4);
    // The normal quantile (0.8416) would give a shorter figure.
    expect(out.planningHours as number).toBeGreaterThan(30 * Math.exp(0.45 * 0.8416212));
    expect(out.interval!.upper).toBeCloseTo(30 * Math.exp(0.45 * studentTQuantile(0.9, 5)), 8);
  });
});

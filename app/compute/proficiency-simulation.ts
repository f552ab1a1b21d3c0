// Remaining training to proficiency by seeded simulation of the proficiency rule (docs/methods.md).
//
// Proficiency is a run of k consecutive sessions at or above the criterion (proficiency-rule.ts), not the
// point where the mean curve crosses it. Each simulated course continues the trainee's log session by
// session: score = curve(hours) + σ·ε, ε standard normal, until `firstProficientIndex` says the run is
// complete. Parameter uncertainty enters every simulated course: σ² is drawn from its scaled inverse-χ²
// distribution σ̂²·df/χ²(df), then the curve parameters from N(θ̂, Σ̂·σ²/σ̂²) — the posterior of a normal
// regression under the usual non-informative prior, applied to the linearised curve (Gelman et al.,
// Bayesian Data Analysis, 3rd ed., §14.2). Draws with a non-positive rate are redrawn (the curves are
// defined for rising scores only). Pure and deterministic for a given seed.

import { type CurveFit, curveScore } from "./curve";
import { firstProficientIndex, type ProficiencyCriterion } from "./proficiency-rule";
import { gaussianSource, mulberry32 } from "./seeded-random";
import { normalCdf } from "./student-t";

export interface SimulationInput {
  fit: CurveFit;
  criterion: ProficiencyCriterion;
  /** Cumulative hours after the last logged session. */
  hoursDone: number;
  /** Length of each future session (hours). */
  sessionHours: number;
  /** Task scores already logged, in order (their tail carries a run in progress). */
  loggedScores: number[];
  draws?: number; // default 2000
  seed?: number; // default 20261205
  /** Sessions simulated at most per course (default 300); courses not done by then count as not reached. */
  maxSessions?: number;
  /** Draw σ and the curve parameters per course (default true); false = the fitted curve and σ̂ only. */
  parameterUncertainty?: boolean;
}

export interface SimulatedRemaining {
  /** Remaining hours of every course that met the criterion within the horizon, ascending. */
  remainingHours: number[];
  draws: number;
  /** Share of courses that met the criterion within `maxSessions` sessions. */
  reachedShare: number;
  sessionHours: number;
  maxSessions: number;
  seed: number;
  /** Parameter draws refused for a non-positive rate (redrawn). */
  redrawn: number;
  /** Courses counted as not done without simulation: their curve cannot meet the rule (bound below 1e-9). */
  pruned: number;
}

export const DEFAULT_SIMULATION_SEED = 20261205;

export function simulateRemaining(input: SimulationInput): SimulatedRemaining {
  const draws = input.draws ?? 2000;
  const seed = input.seed ?? DEFAULT_SIMULATION_SEED;
  const maxSessions = input.maxSessions ?? 300;
  const { fit, criterion, hoursDone, sessionHours } = input;
  if (!Number.isInteger(draws) || draws < 1) throw new RangeError(`draws must be a whole number ≥ 1, got ${draws}`);
  if (!Number.isInteger(maxSessions) || maxSessions < 1)
    throw new RangeError(`maxSessions must be a whole number ≥ 1, got ${maxSessions}`);
  if (!(sessionHours > 0) || !Number.isFinite(sessionHours))
    throw new RangeError(`session length must be more than 0 hours, got ${sessionHours}`);
  if (!(hoursDone >= 0) || !Number.isFinite(hoursDone))
    throw new RangeError(`hours done must be 0 or more, got ${hoursDone}`);
  if (!(fit.residualSD >= 0) || !Number.isFinite(fit.residualSD))
    throw new RangeError("the curve has no usable residual SD (too few sessions for its parameters)");
  // Validates the criterion and makes sure the log does not already meet it.
  if (firstProficientIndex(input.loggedScores, criterion) >= 0)
    throw new RangeError("the logged sessions already meet the proficiency criterion");

  const k = criterion.consecutiveSessions;
  const loggedTail = input.loggedScores.slice(input.loggedScores.length - (k - 1));
  const uniform = mulberry32(seed);
  const gauss = gaussianSource(uniform);
  const withUncertainty = input.parameterUncertainty ?? true;
  const names = fit.parameterNames;
  const estimate = names.map((name) => fit[name as "asymptote" | "start" | "rate"]);
  const chol = withUncertainty ? cholesky(fit.covariance) : null;
  if (withUncertainty && !chol) throw new RangeError("the curve parameters have no usable covariance");
  const df = fit.dfResidual;
  if (withUncertainty && !(df >= 1)) throw new RangeError("the curve has no residual degrees of freedom");

  const remaining: number[] = [];
  let redrawn = 0;
  let pruned = 0;
  const block = Math.max(16, 2 * k);
  const sequence: number[] = []; // reused: carried scores, then one block of simulated sessions
  for (let d = 0; d < draws; d++) {
    let sigma = fit.residualSD;
    let curve = { kind: fit.kind, asymptote: fit.asymptote, start: fit.start, rate: fit.rate };
    if (chol) {
      const scale = Math.sqrt(df / chiSquare(df, uniform, gauss)); // σ/σ̂
      sigma = fit.residualSD * scale;
      for (let attempt = 0; ; attempt++) {
        const z = estimate.map(() => gauss());
        const theta = estimate.map((m, i) => {
          let s = 0;
          for (let j = 0; j <= i; j++) s += chol[i][j] * z[j];
          return m + scale * s;
        });
        const drawn = { ...curve };
        names.forEach((name, i) => {
          drawn[name as "asymptote" | "start" | "rate"] = theta[i];
        });
        if (drawn.rate > 0) {
          curve = drawn;
          break;
        }
        redrawn++;
        if (attempt >= 99) throw new RangeError("the curve's rate is not clearly positive; no simulation is possible");
      }
    }
    // A rising curve stays below its asymptote, so each session clears the criterion with probability at
    // most p = Φ((asymptote − T)/σ) and the run completes within the horizon with probability at most
    // maxSessions·p^k. Below 1e-9 the course counts as not done without simulating it.
    if (curve.start <= curve.asymptote && sigma > 0) {
      const p = normalCdf((curve.asymptote - criterion.scoreThreshold) / sigma);
      if (maxSessions * p ** k < 1e-9) {
        pruned++;
        continue;
      }
    }
    // Continue the log block by block; `carry` (at most k − 1 scores) carries a run in progress.
    let carried = loggedTail.length;
    for (let i = 0; i < carried; i++) sequence[i] = loggedTail[i];
    let done = 0;
    while (done < maxSessions) {
      const count = Math.min(block, maxSessions - done);
      sequence.length = carried + count;
      for (let j = 1; j <= count; j++) {
        sequence[carried + j - 1] = curveScore(curve, hoursDone + (done + j) * sessionHours) + sigma * gauss();
      }
      const at = firstProficientIndex(sequence, criterion);
      if (at >= 0) {
        remaining.push((done + at - carried + 1) * sessionHours);
        break;
      }
      done += count;
      // The last k − 1 scores start the next block.
      const keep = Math.min(k - 1, sequence.length);
      for (let i = 0; i < keep; i++) sequence[i] = sequence[sequence.length - keep + i];
      carried = keep;
    }
  }
  remaining.sort((a, b) => a - b);
  return {
    remainingHours: remaining,
    draws,
    reachedShare: remaining.length / draws,
    sessionHours,
    maxSessions,
    seed,
    redrawn,
    pruned,
  };
}

/**
 * The q-quantile of the simulated remaining hours over ALL courses (those not done within the horizon count
 * as longer than any done); null when more than a share 1 − q were not done. Type 1 (inverse of the
 * empirical distribution; Hyndman & Fan 1996).
 */
export function simulatedQuantile(sim: SimulatedRemaining, q: number): number | null {
  if (!(q > 0 && q < 1)) throw new RangeError(`quantile must be strictly between 0 and 1, got ${q}`);
  const rank = Math.ceil(q * sim.draws); // 1-based
  return rank <= sim.remainingHours.length ? sim.remainingHours[rank - 1] : null;
}

/**
 * A χ²(df) draw as 2·Gamma(df/2) by Marsaglia & Tsang (2000), ACM TOMS 26:363–372; for shape < 1 the
 * boost Gamma(a) = Gamma(a + 1)·U^(1/a).
 */
export function chiSquare(df: number, uniform: () => number, gauss: () => number): number {
  const shape = df / 2;
  const a = shape < 1 ? shape + 1 : shape;
  const d = a - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  let gamma: number;
  for (;;) {
    const z = gauss();
    const v = (1 + c * z) ** 3;
    if (v <= 0) continue;
    const u = uniform();
    if (Math.log(u) < 0.5 * z * z + d - d * v + d * Math.log(v)) {
      gamma = d * v;
      break;
    }
  }
  if (shape < 1) gamma *= uniform() ** (1 / shape);
  return 2 * gamma;
}

/** Lower-triangular L with LLᵀ = S, or null when S is not positive definite (or has NaN). */
function cholesky(S: number[][]): number[][] | null {
  const p = S.length;
  const L = Array.from({ length: p }, () => new Array<number>(p).fill(0));
  for (let i = 0; i < p; i++) {
    for (let j = 0; j <= i; j++) {
      let sum = S[i][j];
      for (let m = 0; m < j; m++) sum -= L[i][m] * L[j][m];
      if (i === j) {
        if (!(sum > 0)) return null;
        L[i][i] = Math.sqrt(sum);
      } else L[i][j] = sum / L[j][j];
    }
  }
  return L;
}

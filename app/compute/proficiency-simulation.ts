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

export interface SimulationInput {
  fit: CurveFit;
  criterion: ProficiencyCriterion;
  /** Cumulative hours after the last logged session. */
  hoursDone: number;
  /** Length of each future session (hours). */
  sessionHours: number;
  /** Task scores already logged, in order (their tail carries a run in progress). */
  loggedScores: number[];
  draws?: number; // default 4000
  seed?: number; // default 20261205
  /** Sessions simulated at most per course (default 500); courses not done by then count as not reached. */
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
}

export const DEFAULT_SIMULATION_SEED = 20261205;

export function simulateRemaining(input: SimulationInput): SimulatedRemaining {
  const draws = input.draws ?? 4000;
  const seed = input.seed ?? DEFAULT_SIMULATION_SEED;
  const maxSessions = input.maxSessions ?? 500;
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
  const block = Math.max(16, 2 * k);
  for (let d = 0; d < draws; d++) {
    let sigma = fit.residualSD;
    let curve = { kind: fit.kind, asymptote: fit.asymptote, start: fit.start, rate: fit.rate };
    if (chol) {
      let chi2 = 0;
      for (let i = 0; i < df; i++) chi2 += gauss() ** 2;
      const scale = Math.sqrt(df / chi2); // σ/σ̂
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
    // Continue the log block by block; `carry` (at most k − 1 scores) carries a run in progress.
    let carry = loggedTail;
    let done = 0;
    while (done < maxSessions) {
      const count = Math.min(block, maxSessions - done);
      const sequence = [...carry];
      for (let j = 1; j <= count; j++) {
        sequence.push(curveScore(curve, hoursDone + (done + j) * sessionHours) + sigma * gauss());
      }
      const at = firstProficientIndex(sequence, criterion);
      if (at >= 0) {
        remaining.push((done + at - carry.length + 1) * sessionHours);
        break;
      }
      done += count;
      carry = sequence.slice(sequence.length - (k - 1));
    }
  }
  remaining.sort((a, b) => a - b);
  return { remainingHours: remaining, draws, reachedShare: remaining.length / draws, sessionHours, maxSessions, seed, redrawn };
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

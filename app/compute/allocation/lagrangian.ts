/**
 * Lagrangian relaxation bound (Held & Karp 1971; Fisher 1981, Management Science 27:1–18).
 * Device-week, trainer-week and group-minimum rows are priced with multipliers; each worker then solves
 * a tiny problem alone (pick an option or none, buy the cheapest weekly hours). For any non-negative
 * multipliers the result is an upper bound on the best plan; a subgradient search with Polyak steps
 * drives it down towards the LP bound. The final multipliers are shadow prices of the resources.
 */
import type { Instance } from "./instance";

export interface LagrangianResult {
  bound: number;
  /** price per device-hour, [d][k] */
  devicePrice: number[][];
  /** price per supervised trainee-hour, [t][k] */
  trainerPrice: number[][];
  groupPrice: number[];
  /** candidate value p − cost at the best multipliers (for ordering heuristics) */
  reducedValue: number[];
  /** the subgradient drove the bound below zero: the group minimums cannot all be met */
  provenInfeasible: boolean;
  iterations: number;
}

interface Evaluation {
  value: number;
  deviceUse: number[][];
  trainerUse: number[][];
  groupReady: number[];
  reduced: number[];
}

function evaluate(inst: Instance, lam: number[][], mu: number[][], nu: number[]): Evaluation {
  const D = inst.deviceIds.length;
  const T = inst.trainerIds.length;
  const H = inst.weeks;
  const deviceUse = lam.map((r) => r.map(() => 0));
  const trainerUse = mu.map((r) => r.map(() => 0));
  const groupReady = nu.map(() => 0);
  const reduced = new Array<number>(inst.candidates.length).fill(0);
  // cheapest certified trainer per device-week
  const weekCost: number[][] = [];
  const weekTrainer: number[][] = [];
  for (let d = 0; d < D; d++) {
    weekCost.push([]);
    weekTrainer.push([]);
    for (let k = 0; k < H; k++) {
      let best = Infinity;
      let bt = -1;
      for (let t = 0; t < T; t++)
        if (inst.trainerHolds[t][d] && inst.trainerCap[t][k] > 0 && mu[t][k] < best) {
          best = mu[t][k];
          bt = t;
        }
      weekCost[d].push(lam[d][k] + (bt >= 0 ? best : 0));
      weekTrainer[d].push(bt);
    }
  }
  // weeks from cheapest to dearest per device type (once per evaluation, not per candidate)
  const weekOrder = weekCost.map((cost) =>
    Array.from({ length: H }, (_, k) => k).sort((a, b) => cost[a] - cost[b] || a - b),
  );
  let value = 0;
  const plan: { c: number; x: number[] }[] = [];
  for (const w of inst.workers) {
    let bestValue = 0;
    let bestC = -1;
    let bestX: number[] = [];
    for (const ci of w.candidates) {
      const c = inst.candidates[ci];
      const cost = weekCost[c.device];
      let left = c.hours;
      let spent = 0;
      const x = new Array<number>(H).fill(0);
      for (const k of weekOrder[c.device]) {
        if (left <= 0) break;
        if (c.weekCap[k] <= 0) continue;
        const take = Math.min(left, c.weekCap[k]);
        x[k] = take;
        spent += take * cost[k];
        left -= take;
      }
      const v = c.value + nu[w.group] - spent;
      reduced[ci] = v;
      if (v > bestValue + 1e-12) {
        bestValue = v;
        bestC = ci;
        bestX = x;
      }
    }
    if (bestC >= 0) {
      value += bestValue;
      plan.push({ c: bestC, x: bestX });
      groupReady[w.group] += 1;
    }
  }
  for (const { c, x } of plan) {
    const d = inst.candidates[c].device;
    for (let k = 0; k < H; k++) {
      if (x[k] <= 0) continue;
      deviceUse[d][k] += x[k];
      const t = weekTrainer[d][k];
      if (t >= 0) trainerUse[t][k] += x[k];
    }
  }
  for (let d = 0; d < D; d++) for (let k = 0; k < H; k++) value += lam[d][k] * inst.deviceCap[d][k];
  for (let t = 0; t < T; t++) for (let k = 0; k < H; k++) value += mu[t][k] * inst.trainerCap[t][k];
  inst.groupMinimum.forEach((m, g) => {
    value -= nu[g] * m;
  });
  return { value, deviceUse, trainerUse, groupReady, reduced };
}

interface Phase {
  best: Evaluation;
  lam: number[][];
  mu: number[][];
  nu: number[];
  iterations: number;
}

/** Plain subgradient steps with Polyak's step length: quick to come near, slow to settle. */
function subgradientPhase(inst: Instance, target: number, maxIterations: number): Phase {
  const D = inst.deviceIds.length;
  const T = inst.trainerIds.length;
  const H = inst.weeks;
  let lam = Array.from({ length: D }, () => new Array<number>(H).fill(0));
  let mu = Array.from({ length: T }, () => new Array<number>(H).fill(0));
  let nu = inst.groupMinimum.map(() => 0);
  let best = evaluate(inst, lam, mu, nu);
  let bestLam = lam.map((r) => [...r]);
  let bestMu = mu.map((r) => [...r]);
  let bestNu = [...nu];
  let cur = best;
  let theta = 1;
  let stall = 0;
  let it = 0;
  const lowTarget = Math.max(0, target);
  for (; it < maxIterations; it++) {
    if (best.value < -1e-6) break;
    // subgradients of the dualised rows
    let norm = 0;
    const gd = lam.map((r, d) => r.map((_, k) => inst.deviceCap[d][k] - cur.deviceUse[d][k]));
    const gt = mu.map((r, t) => r.map((_, k) => inst.trainerCap[t][k] - cur.trainerUse[t][k]));
    const gg = nu.map((_, g) => cur.groupReady[g] - inst.groupMinimum[g]);
    for (let d = 0; d < D; d++)
      for (let k = 0; k < H; k++) if (!(lam[d][k] <= 0 && gd[d][k] > 0)) norm += gd[d][k] ** 2;
    for (let t = 0; t < T; t++) for (let k = 0; k < H; k++) if (!(mu[t][k] <= 0 && gt[t][k] > 0)) norm += gt[t][k] ** 2;
    nu.forEach((v, g) => {
      if (!(v <= 0 && gg[g] > 0)) norm += gg[g] ** 2;
    });
    if (norm < 1e-12) break; // complementary slackness holds: the bound is exact
    const gapToTarget = Math.max(cur.value - lowTarget, 1e-3 * Math.max(1, cur.value));
    const step = (theta * gapToTarget) / norm;
    lam = lam.map((r, d) => r.map((v, k) => Math.max(0, v - step * gd[d][k])));
    mu = mu.map((r, t) => r.map((v, k) => Math.max(0, v - step * gt[t][k])));
    nu = nu.map((v, g) => Math.max(0, v - step * gg[g]));
    cur = evaluate(inst, lam, mu, nu);
    if (cur.value < best.value - 1e-9) {
      best = cur;
      bestLam = lam.map((r) => [...r]);
      bestMu = mu.map((r) => [...r]);
      bestNu = [...nu];
      stall = 0;
    } else if (++stall >= 8) {
      theta /= 2;
      stall = 0;
      if (theta < 1e-4) break;
    }
    if (best.value <= target + 1e-9) break;
  }
  return { best, lam: bestLam, mu: bestMu, nu: bestNu, iterations: it };
}

export function lagrangianBound(inst: Instance, target: number, maxIterations: number): LagrangianResult {
  const start = subgradientPhase(inst, target, maxIterations);
  const end = volumePhase(inst, target, maxIterations, start);
  return {
    bound: end.best.value,
    devicePrice: end.lam,
    trainerPrice: end.mu,
    groupPrice: end.nu,
    reducedValue: end.best.reduced,
    provenInfeasible: end.best.value < -1e-6,
    iterations: start.iterations + end.iterations,
  };
}

/**
 * Volume algorithm (Barahona & Anbil 2000, Mathematical Programming 87:385–399) from the subgradient's best
 * point: the step direction is the subgradient of a running average of the subproblem solutions, which
 * damps the zig-zag of plain steps on this lumpy (one worker in or out) dual and settles close to the
 * LP bound. Every trial point is itself a valid bound; the best one is kept.
 */
function volumePhase(inst: Instance, target: number, maxIterations: number, start: Phase): Phase {
  const D = inst.deviceIds.length;
  const T = inst.trainerIds.length;
  const H = inst.weeks;
  const copy = (m: number[][]) => m.map((r) => [...r]);
  let best = start.best;
  let bestLam = start.lam;
  let bestMu = start.mu;
  let bestNu = start.nu;
  let lam = bestLam;
  let mu = bestMu;
  let nu = bestNu;
  const lowTarget = Math.max(0, target);
  let avgDevice = copy(best.deviceUse);
  let avgTrainer = copy(best.trainerUse);
  let avgGroup = [...best.groupReady];
  let theta = 0.1;
  let alphaMax = 0.1;
  let checkpoint = best.value;
  let reds = 0;
  let sinceBest = 0;
  let it = 0;
  for (; it < maxIterations; it++) {
    if (best.value < -1e-6) break;
    if (best.value <= target + 1e-9) break;
    // with whole-number priorities a bound below the incumbent + 1 already proves it optimal
    if (inst.integralPriorities && Math.floor(best.value + 1e-6) <= target + 1e-9) break;
    // stop once a hundred steps gain less than 0.002 % of the bound
    if (it % 100 === 0) {
      if (it >= 300 && checkpoint - best.value < 2e-5 * Math.max(1, Math.abs(best.value))) break;
      checkpoint = best.value;
    }
    // subgradient of the dualised rows at the averaged solution, projected onto the multipliers' bounds
    let norm = 0;
    const gd = avgDevice.map((r, d) => r.map((u, k) => inst.deviceCap[d][k] - u));
    const gt = avgTrainer.map((r, t) => r.map((u, k) => inst.trainerCap[t][k] - u));
    const gg = avgGroup.map((r, g) => r - inst.groupMinimum[g]);
    for (let d = 0; d < D; d++)
      for (let k = 0; k < H; k++) if (!(bestLam[d][k] <= 0 && gd[d][k] > 0)) norm += gd[d][k] ** 2;
    for (let t = 0; t < T; t++)
      for (let k = 0; k < H; k++) if (!(bestMu[t][k] <= 0 && gt[t][k] > 0)) norm += gt[t][k] ** 2;
    bestNu.forEach((v, g) => {
      if (!(v <= 0 && gg[g] > 0)) norm += gg[g] ** 2;
    });
    if (norm < 1e-12) break; // the averaged solution fits every row: the bound cannot drop further this way
    const gapToTarget = Math.max(best.value - lowTarget, 1e-3 * Math.max(1, best.value));
    const step = (theta * gapToTarget) / norm;
    lam = bestLam.map((r, d) => r.map((v, k) => Math.max(0, v - step * gd[d][k])));
    mu = bestMu.map((r, t) => r.map((v, k) => Math.max(0, v - step * gt[t][k])));
    nu = bestNu.map((v, g) => Math.max(0, v - step * gg[g]));
    const cur = evaluate(inst, lam, mu, nu);
    // α minimises the norm of the averaged subgradient, within [αmax / 10, αmax]
    let dot = 0;
    let vv = 0;
    for (let d = 0; d < D; d++)
      for (let k = 0; k < H; k++) {
        const v = inst.deviceCap[d][k] - cur.deviceUse[d][k] - gd[d][k];
        dot += gd[d][k] * v;
        vv += v * v;
      }
    for (let t = 0; t < T; t++)
      for (let k = 0; k < H; k++) {
        const v = inst.trainerCap[t][k] - cur.trainerUse[t][k] - gt[t][k];
        dot += gt[t][k] * v;
        vv += v * v;
      }
    const alpha = Math.min(alphaMax, Math.max(alphaMax / 10, vv > 1e-12 ? -dot / vv : alphaMax));
    avgDevice = avgDevice.map((r, d) => r.map((u, k) => alpha * cur.deviceUse[d][k] + (1 - alpha) * u));
    avgTrainer = avgTrainer.map((r, t) => r.map((u, k) => alpha * cur.trainerUse[t][k] + (1 - alpha) * u));
    avgGroup = avgGroup.map((u, g) => alpha * cur.groupReady[g] + (1 - alpha) * u);
    if (cur.value < best.value - 1e-9) {
      // green: the bound improved; a longer step next time if the new subgradient still points the same way
      let agree = 0;
      for (let d = 0; d < D; d++)
        for (let k = 0; k < H; k++) agree += gd[d][k] * (inst.deviceCap[d][k] - cur.deviceUse[d][k]);
      if (agree >= 0) theta = Math.min(2, theta * 1.1);
      best = cur;
      bestLam = lam;
      bestMu = mu;
      bestNu = nu;
      reds = 0;
      sinceBest = 0;
    } else {
      // red: after a run of failures take shorter steps and average more slowly
      sinceBest++;
      if (++reds >= 20) {
        theta *= 0.66;
        reds = 0;
        if (theta < 1e-5) break;
      }
      if (sinceBest >= 100) {
        alphaMax = Math.max(1e-3, alphaMax / 2);
        sinceBest = 0;
      }
    }
  }
  return { best, lam: bestLam, mu: bestMu, nu: bestNu, iterations: it };
}

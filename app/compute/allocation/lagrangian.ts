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
  let value = 0;
  const order: number[] = [];
  const plan: { c: number; x: number[] }[] = [];
  for (const w of inst.workers) {
    let bestValue = 0;
    let bestC = -1;
    let bestX: number[] = [];
    for (const ci of w.candidates) {
      const c = inst.candidates[ci];
      const cost = weekCost[c.device];
      order.length = 0;
      for (let k = 0; k < H; k++) if (c.weekCap[k] > 0) order.push(k);
      order.sort((a, b) => cost[a] - cost[b] || a - b);
      let left = c.hours;
      let spent = 0;
      const x = new Array<number>(H).fill(0);
      for (const k of order) {
        if (left <= 0) break;
        const take = Math.min(left, c.weekCap[k]);
        x[k] = take;
        spent += take * cost[k];
        left -= take;
      }
      const v = w.priority + nu[w.group] - spent;
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

export function lagrangianBound(inst: Instance, target: number, maxIterations: number): LagrangianResult {
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
  return {
    bound: best.value,
    devicePrice: bestLam,
    trainerPrice: bestMu,
    groupPrice: bestNu,
    reducedValue: best.reduced,
    provenInfeasible: best.value < -1e-6,
    iterations: it,
  };
}

/**
 * Capacity cuts: valid inequalities Σ a_c·z_c ≤ b for the selection variables z (1 = candidate trained).
 * A cut is defined by choosing, for every week k, a set S_k of device types. Each candidate on device d
 * must still receive at least a_c = hours − Σ_{k: d ∉ S_k} weekCap_k of its hours in device-weeks inside
 * the sets, and those device-weeks can deliver at most b = Σ_k g_k(S_k) supervised hours, where g_k is the
 * maximum flow from the device types in S_k through their certified trainers in week k. These are exactly
 * the cut conditions of the training network (max-flow min-cut), so a selection satisfying all of them
 * can be realised; the LP over a few of them is a valid relaxation.
 */

import type { Candidate, Instance } from "./instance";
import { FlowNetwork } from "./maxflow";

export interface CapacityCut {
  /** bitmask of device types per week */
  masks: number[];
  rhs: number;
  key: string;
}

/** g_k(S): supervised hours the device types in mask can absorb in week k. */
export class WeekCapacity {
  private cache = new Map<number, number>();
  constructor(private inst: Instance) {}

  get(k: number, mask: number): number {
    if (mask === 0) return 0;
    const key = k * 4096 + mask;
    const hit = this.cache.get(key);
    if (hit !== undefined) return hit;
    const { inst } = this;
    const D = inst.deviceIds.length;
    const T = inst.trainerIds.length;
    const net = new FlowNetwork(2 + D + T);
    for (let d = 0; d < D; d++) {
      if (!(mask & (1 << d))) continue;
      net.addEdge(0, 2 + d, inst.deviceCap[d][k]);
      for (let t = 0; t < T; t++) if (inst.trainerHolds[t][d]) net.addEdge(2 + d, 2 + D + t, Infinity);
    }
    for (let t = 0; t < T; t++) net.addEdge(2 + D + t, 1, inst.trainerCap[t][k]);
    const value = net.augment(0, 1);
    this.cache.set(key, value);
    return value;
  }
}

export function makeCut(masks: number[], weekCapacity: WeekCapacity): CapacityCut {
  let rhs = 0;
  masks.forEach((m, k) => {
    rhs += weekCapacity.get(k, m);
  });
  return { masks, rhs, key: masks.join(",") };
}

export function cutCoefficient(cut: CapacityCut, c: Candidate): number {
  let outside = 0;
  const bit = 1 << c.device;
  for (let k = 0; k < c.weekCap.length; k++) if (!(cut.masks[k] & bit)) outside += c.weekCap[k];
  return Math.max(0, c.hours - outside);
}

/**
 * A starter family: for every week window [a, b] and every device set S that is a single type, a pair,
 * or the whole fleet, the cut with S_k = S inside the window. Windows catch workers whose leave forces
 * their hours into part of the horizon.
 */
export function starterCuts(inst: Instance, weekCapacity: WeekCapacity): CapacityCut[] {
  const D = inst.deviceIds.length;
  const H = inst.weeks;
  const sets: number[] = [];
  for (let d = 0; d < D; d++) sets.push(1 << d);
  for (let a = 0; a < D; a++) for (let b = a + 1; b < D; b++) sets.push((1 << a) | (1 << b));
  if (D > 2) sets.push((1 << D) - 1);
  const cuts: CapacityCut[] = [];
  for (const s of sets)
    for (let a = 0; a < H; a++)
      for (let b = a; b < H; b++) {
        const masks = Array.from({ length: H }, (_, k) => (k >= a && k <= b ? s : 0));
        cuts.push(makeCut(masks, weekCapacity));
      }
  return cuts;
}

export function cutFromDeviceSets(sets: number[][], weekCapacity: WeekCapacity): CapacityCut {
  return makeCut(
    sets.map((s) => s.reduce((m, d) => m | (1 << d), 0)),
    weekCapacity,
  );
}

/** Σ a_c z_c − b for a selection given as candidate → z. */
export function cutViolation(cut: CapacityCut, inst: Instance, z: Map<number, number>): number {
  let lhs = 0;
  for (const [c, v] of z) if (v > 0) lhs += cutCoefficient(cut, inst.candidates[c]) * v;
  return lhs - cut.rhs;
}

/**
 * An extended cover inequality Σ_{c ∈ E} z_c ≤ |C| − 1 (Crowder, Johnson & Padberg 1983): C is a set of
 * candidates whose coefficients in one capacity cut exceed its right-hand side together, so not all of
 * them fit; E adds every candidate whose coefficient is at least the largest in C. Valid for every
 * whole-number selection that meets the capacity cut; it cuts off fractional points the cut LP keeps.
 */
export interface CoverCut {
  members: number[];
  rhs: number;
  key: string;
}

/** The most violated cover the greedy rule finds in one capacity cut, or null. */
export function coverFrom(cut: CapacityCut, inst: Instance, z: Map<number, number>): CoverCut | null {
  const items: { c: number; a: number; v: number }[] = [];
  for (const [c, v] of z) {
    if (v <= 1e-9) continue;
    const a = cutCoefficient(cut, inst.candidates[c]);
    if (a > 1e-9) items.push({ c, a, v });
  }
  // least (1 − z) first, larger coefficients first on a tie
  items.sort((x, y) => y.v - x.v || y.a - x.a || x.c - y.c);
  const cover: typeof items = [];
  let total = 0;
  let slack = 0;
  for (const it of items) {
    cover.push(it);
    total += it.a;
    slack += 1 - it.v;
    if (slack >= 1 - 1e-7) return null;
    if (total > cut.rhs + 1e-7) break;
  }
  if (total <= cut.rhs + 1e-7) return null;
  // drop members the cover does not need (largest 1 − z first), keeping Σ a > rhs
  for (let i = cover.length - 1; i >= 0; i--)
    if (total - cover[i].a > cut.rhs + 1e-7) {
      total -= cover[i].a;
      cover.splice(i, 1);
    }
  const rhs = cover.length - 1;
  const amax = Math.max(...cover.map((x) => x.a));
  const members = new Set(cover.map((x) => x.c));
  for (const c of inst.candidates) if (cutCoefficient(cut, c) >= amax - 1e-9) members.add(c.index);
  const sorted = [...members].sort((a, b) => a - b);
  let lhs = 0;
  for (const c of sorted) lhs += z.get(c) ?? 0;
  if (lhs <= rhs + 1e-6) return null;
  return { members: sorted, rhs, key: `cover:${rhs}:${sorted.join(",")}` };
}

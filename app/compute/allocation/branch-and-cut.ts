/**
 * Branch-and-cut over the selection variables. Each node solves the cut LP; violated capacity cuts are
 * separated exactly with the max-flow of the fractional selection (the min cut is the cut) and from a
 * starter family of window cuts. Integer LP points that pass separation are realisable plans.
 * Best-first search; with whole-number priorities a node is pruned once ⌊bound⌋ ≤ incumbent.
 */

import {
  type CapacityCut,
  type CoverCut,
  coverFrom,
  cutFromDeviceSets,
  cutViolation,
  makeCut,
  starterCuts,
  WeekCapacity,
} from "./cuts";
import type { Instance } from "./instance";
import { type Fixing, type MasterResult, solveMaster } from "./master";
import { TrainingNetwork } from "./network";

export class CutPool {
  readonly active: CapacityCut[] = [];
  readonly covers: CoverCut[] = [];
  private readonly keys = new Set<string>();
  private readonly dormant: CapacityCut[];
  readonly weekCapacity: WeekCapacity;
  private readonly sepNet: TrainingNetwork;

  constructor(private inst: Instance) {
    this.weekCapacity = new WeekCapacity(inst);
    const all = starterCuts(inst, this.weekCapacity);
    // Start with whole-horizon cuts for each device type and for the whole fleet.
    const H = inst.weeks;
    this.dormant = [];
    for (const cut of all) {
      const whole = cut.masks.every((m) => m === cut.masks[0]) && cut.masks[0] !== 0 && H > 0;
      if (whole) this.add(cut);
      else this.dormant.push(cut);
    }
    this.sepNet = new TrainingNetwork(inst);
  }

  add(cut: CapacityCut): boolean {
    if (this.keys.has(cut.key)) return false;
    this.keys.add(cut.key);
    this.active.push(cut);
    return true;
  }

  /** Add cuts violated by z; returns how many were added. */
  separate(z: Map<number, number>, maxFamily = 8): number {
    const { inst } = this;
    let added = 0;
    // exact separation: the min cut of the fractional network
    const net = this.sepNet;
    for (let c = 0; c < inst.candidates.length; c++) if (net.scale[c] !== 0) net.setScale(c, 0);
    let demand = 0;
    for (const [c, v] of z) {
      net.setScale(c, v);
      demand += v * inst.candidates[c].hours;
    }
    const flow = net.augment();
    let total = 0;
    for (const [c] of z) total += net.net.flow(net.sourceEdge[c]);
    if (demand - total > 1e-6 * Math.max(1, demand)) {
      const cut = cutFromDeviceSets(net.cutDeviceSets(), this.weekCapacity);
      if (cutViolation(cut, inst, z) > 1e-7 && this.add(cut)) added++;
    }
    void flow;
    // the starter family, most violated first
    const violated = this.dormant
      .map((cut) => ({ cut, v: cutViolation(cut, inst, z) }))
      .filter((x) => x.v > 1e-7 && !this.keys.has(x.cut.key))
      .sort((a, b) => b.v - a.v)
      .slice(0, maxFamily);
    for (const { cut } of violated) if (this.add(cut)) added++;
    return added;
  }

  /** Cover inequalities from the capacity cuts that z (nearly) fills; returns how many were added. */
  separateCovers(z: Map<number, number>, max = 10): number {
    const found: { cover: CoverCut; v: number }[] = [];
    for (const cut of this.active) {
      if (cutViolation(cut, this.inst, z) < -1e-3 * Math.max(1, cut.rhs)) continue;
      const cover = coverFrom(cut, this.inst, z);
      if (!cover || this.keys.has(cover.key)) continue;
      let lhs = 0;
      for (const c of cover.members) lhs += z.get(c) ?? 0;
      found.push({ cover, v: lhs - cover.rhs });
    }
    found.sort((a, b) => b.v - a.v || a.cover.key.localeCompare(b.cover.key));
    let added = 0;
    for (const { cover } of found) {
      if (added >= max) break;
      if (this.keys.has(cover.key)) continue;
      this.keys.add(cover.key);
      this.covers.push(cover);
      added++;
    }
    return added;
  }

  cutFromMasks(masks: number[]): CapacityCut {
    return makeCut(masks, this.weekCapacity);
  }
}

export interface NodeOutcome {
  result: MasterResult;
  integral: boolean;
}

/** Solve a node's LP to a point that satisfies every capacity cut (or report it infeasible). */
export function solveNode(
  inst: Instance,
  pool: CutPool,
  fix: Fixing,
  stopBelow: number,
  maxRounds = 60,
): NodeOutcome | null {
  let result = solveMaster(inst, pool.active, fix, pool.covers);
  for (let round = 0; round < maxRounds; round++) {
    if (!result.feasible) return null;
    if (result.objective < stopBelow) break; // cannot beat the incumbent: no need to tighten
    if (pool.separate(result.z) === 0 && pool.separateCovers(result.z) === 0) break;
    result = solveMaster(inst, pool.active, fix, pool.covers);
  }
  if (!result.feasible) return null;
  let integral = true;
  for (const v of result.z.values())
    if (v > 1e-6 && v < 1 - 1e-6) {
      integral = false;
      break;
    }
  return { result, integral };
}

export interface BranchAndCutResult {
  bound: number;
  /** search finished: the incumbent (if any) is optimal, or none exists */
  complete: boolean;
  rootBound: number;
  rootInfeasible: boolean;
  nodes: number;
}

interface OpenNode {
  fix: Fixing;
  bound: number;
  depth: number;
  seq: number;
}

export interface BranchAndCutHooks {
  /** current incumbent value (−Infinity when none) */
  incumbent: () => number;
  /** offered an LP point; may run a rounding heuristic and improve the incumbent */
  onPoint: (z: Map<number, number>, integral: boolean) => void;
  /** stop early (budget) */
  stop: () => boolean;
  maxNodes: number;
  /** fixings known before the search (reduced-cost fixing); the root starts from them */
  rootFix?: Fixing;
}

export function branchAndCut(inst: Instance, pool: CutPool, hooks: BranchAndCutHooks): BranchAndCutResult {
  const whole = inst.integralPriorities;
  const canImprove = (bound: number) =>
    whole ? Math.floor(bound + 1e-6) > hooks.incumbent() + 1e-9 : bound > hooks.incumbent() + 1e-9;
  const open: OpenNode[] = [
    { fix: hooks.rootFix ?? { one: new Set(), zero: new Set() }, bound: Infinity, depth: 0, seq: 0 },
  ];
  let seq = 1;
  let nodes = 0;
  let rootBound = Infinity;
  let rootInfeasible = false;
  while (open.length) {
    if (nodes >= hooks.maxNodes || hooks.stop()) break;
    // best bound first; deeper and then older nodes break ties (stable)
    let bi = 0;
    for (let i = 1; i < open.length; i++) {
      const a = open[i];
      const b = open[bi];
      if (
        a.bound > b.bound + 1e-9 ||
        (Math.abs(a.bound - b.bound) <= 1e-9 && (a.depth > b.depth || (a.depth === b.depth && a.seq < b.seq)))
      )
        bi = i;
    }
    const node = open.splice(bi, 1)[0];
    if (!canImprove(node.bound)) continue;
    nodes++;
    const incumbentNow = hooks.incumbent();
    const out = solveNode(inst, pool, node.fix, whole ? Math.floor(incumbentNow) + 1 - 1e-6 : incumbentNow);
    if (node.depth === 0) {
      rootInfeasible = out === null;
      rootBound = out ? out.result.objective : -Infinity;
    }
    if (!out) continue;
    const { result } = out;
    hooks.onPoint(result.z, out.integral);
    if (out.integral || !canImprove(result.objective)) continue;
    // branch on the fractional candidate with the largest priority × min(z, 1 − z)
    let pick = -1;
    let score = -1;
    for (const [c, v] of result.z) {
      if (v <= 1e-6 || v >= 1 - 1e-6) continue;
      const s = inst.candidates[c].value * Math.min(v, 1 - v) + 1e-9 * v;
      if (s > score + 1e-12) {
        score = s;
        pick = c;
      }
    }
    if (pick < 0) continue;
    const up: Fixing = { one: new Set(node.fix.one).add(pick), zero: new Set(node.fix.zero) };
    const down: Fixing = { one: new Set(node.fix.one), zero: new Set(node.fix.zero).add(pick) };
    open.push({ fix: up, bound: result.objective, depth: node.depth + 1, seq: seq++ });
    open.push({ fix: down, bound: result.objective, depth: node.depth + 1, seq: seq++ });
  }
  let bound = hooks.incumbent();
  for (const n of open) if (canImprove(n.bound)) bound = Math.max(bound, whole ? Math.floor(n.bound + 1e-6) : n.bound);
  const complete = open.every((n) => !canImprove(n.bound));
  if (rootInfeasible) bound = -Infinity;
  return { bound, complete, rootBound, rootInfeasible, nodes };
}

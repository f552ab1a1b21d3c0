/**
 * The cut LP: maximise Σ priority·z over candidates, one option per worker, group minimums, and the
 * capacity cuts found so far. Fixed-to-one candidates are moved to the right-hand sides; fixed-to-zero
 * ones are left out. Objective values are recomputed from the returned variable values.
 */

import { type LpColumn, type LpRow, solveLp } from "../lp-solver";
import { type CapacityCut, type CoverCut, cutCoefficient } from "./cuts";
import type { Instance } from "./instance";

export interface Fixing {
  one: Set<number>;
  zero: Set<number>;
}

export interface MasterResult {
  feasible: boolean;
  /** candidate → value (fixed ones included as 1) */
  z: Map<number, number>;
  objective: number;
}

export function solveMaster(inst: Instance, cuts: CapacityCut[], fix: Fixing, covers: CoverCut[] = []): MasterResult {
  const fixedWorker = new Set<number>();
  for (const c of fix.one) fixedWorker.add(inst.candidates[c].worker);
  const free = inst.candidates.filter(
    (c) => !fix.zero.has(c.index) && !fix.one.has(c.index) && !fixedWorker.has(c.worker),
  );

  const rows: LpRow[] = [];
  const columns: LpColumn[] = free.map((c) => ({
    name: `c${c.index}`,
    objective: c.value,
    coefficients: { [`w${c.worker}`]: 1 },
  }));
  const seenWorker = new Set<number>();
  for (const c of free)
    if (!seenWorker.has(c.worker)) {
      seenWorker.add(c.worker);
      rows.push({ name: `w${c.worker}`, max: 1 });
    }

  let feasibleByFixing = true;
  inst.groupMinimum.forEach((m, g) => {
    if (m <= 0) return;
    let fixedIn = 0;
    for (const c of fix.one) if (inst.workers[inst.candidates[c].worker].group === g) fixedIn++;
    const need = m - fixedIn;
    if (need <= 0) return;
    rows.push({ name: `g${g}`, min: need });
    let any = false;
    columns.forEach((col, i) => {
      if (inst.workers[free[i].worker].group === g) {
        col.coefficients[`g${g}`] = 1;
        any = true;
      }
    });
    if (!any) feasibleByFixing = false;
  });

  cuts.forEach((cut, j) => {
    let used = 0;
    for (const c of fix.one) used += cutCoefficient(cut, inst.candidates[c]);
    const rhs = cut.rhs - used;
    if (rhs < -1e-7) feasibleByFixing = false;
    let any = false;
    columns.forEach((col, i) => {
      const a = cutCoefficient(cut, free[i]);
      if (a > 1e-12) {
        col.coefficients[`k${j}`] = a;
        any = true;
      }
    });
    if (any) rows.push({ name: `k${j}`, max: Math.max(0, rhs) });
  });

  const columnOf = new Map(free.map((c, i) => [c.index, i] as const));
  covers.forEach((cover, j) => {
    let rhs = cover.rhs;
    let any = false;
    for (const c of cover.members) {
      if (fix.one.has(c)) rhs -= 1;
      const i = columnOf.get(c);
      if (i === undefined) continue;
      columns[i].coefficients[`v${j}`] = 1;
      any = true;
    }
    if (rhs < -1e-7) feasibleByFixing = false;
    if (any) rows.push({ name: `v${j}`, max: Math.max(0, rhs) });
  });

  const z = new Map<number, number>();
  let objective = 0;
  for (const c of fix.one) {
    z.set(c, 1);
    objective += inst.candidates[c].value;
  }
  if (!feasibleByFixing) return { feasible: false, z, objective: -Infinity };
  if (columns.length === 0) return { feasible: !rows.some((r) => r.min !== undefined), z, objective };
  const res = solveLp({ sense: "max", rows, columns, options: { presolve: false } });
  if (!res.feasible) return { feasible: false, z, objective: -Infinity };
  free.forEach((c) => {
    const v = Math.min(1, Math.max(0, res.values.get(`c${c.index}`) ?? 0));
    if (v > 1e-9) {
      z.set(c.index, v);
      objective += v * c.value;
    }
  });
  return { feasible: true, z, objective };
}

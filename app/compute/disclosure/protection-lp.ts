// Complementary suppression for any additive table structure (linked views included), by LP.
//
// To protect a hidden number k, look for a direction δ in which the whole table can move without
// changing anything published: every additivity relation holds for δ, δ_k = 1, and δ is zero on all
// published numbers — so every number with δ ≠ 0 must be hidden. Minimising the cost of the published
// numbers that δ touches picks a cheap set of complementary cells (the protection LP of Fischetti &
// Salazar-González 2000 and the network heuristics before it, reduced to one cell — from memory).
// The LP is always feasible: δ = table / value_k scales the whole table and satisfies every relation.

import { solveLinearProgram } from "../lp-solver";
import { firstNarrowEntry } from "./attacker";
import { echelon, hiddenSystem, linearlyDetermined } from "./linear-algebra";
import type { TableSystem } from "./table-system";

/**
 * An audited hidden number is accepted when its interval is at least this wide, i.e. it admits at
 * least two whole-number values. With all hidden counts ≥ 1 the true value then lies strictly inside
 * (see cycle-heuristic.ts), so for two-way tables value ± 1 are both possible.
 */
export const REQUIRED_WIDTH = 1;

export type CostOf = (entry: number) => number;

/** Published entries that must also be hidden so that `target` can move. */
export function protectionSet(system: TableSystem, suppressed: boolean[], target: number, cost: CostOf): number[] {
  // Column layout: one free column per other hidden entry, an up and a down column per published
  // positive entry. Published zeros get no column: they stay fixed and are never hidden.
  type Column = { entry: number; sign: 1 | -1; cost: number; free: boolean };
  const columns: Column[] = [];
  system.entries.forEach((entry, e) => {
    if (e === target) return;
    if (suppressed[e]) columns.push({ entry: e, sign: 1, cost: 0, free: true });
    else if (entry.value > 0) {
      const c = cost(e);
      columns.push({ entry: e, sign: 1, cost: c, free: false }, { entry: e, sign: -1, cost: c, free: false });
    }
  });
  const byEntry = new Map<number, number[]>();
  columns.forEach((col, v) => {
    byEntry.set(col.entry, [...(byEntry.get(col.entry) ?? []), v]);
  });
  const rows: Float64Array[] = [];
  const rhs: number[] = [];
  for (const relation of system.relations) {
    const row = new Float64Array(columns.length);
    let b = 0;
    let used = false;
    relation.entries.forEach((e, t) => {
      const coefficient = relation.coefficients[t];
      if (e === target) b -= coefficient;
      for (const v of byEntry.get(e) ?? []) {
        row[v] += coefficient * columns[v].sign;
        used = true;
      }
    });
    if (used) {
      rows.push(row);
      rhs.push(b);
    }
  }
  const { kept } = echelon(rows, rhs);
  const answer = solveLinearProgram({
    sense: "min",
    objective: columns.map((c) => c.cost),
    rows: kept.map((r) => rows[r]),
    rhs: kept.map((r) => rhs[r]),
    free: columns.map((c) => c.free),
  });
  if (answer.status !== "optimal") return [];
  const movement = new Map<number, number>();
  columns.forEach((col, v) => {
    if (!col.free) movement.set(col.entry, (movement.get(col.entry) ?? 0) + col.sign * answer.values[v]);
  });
  return [...movement.entries()]
    .filter(([, d]) => Math.abs(d) > 1e-7)
    .map(([e]) => e)
    .sort((a, b) => a - b);
}

/** Fallback when the LP adds nothing: hide every published positive number related to the target. */
function neighbours(system: TableSystem, suppressed: boolean[], target: number): number[] {
  const found = new Set<number>();
  for (const relation of system.relations) {
    if (!relation.entries.includes(target)) continue;
    for (const e of relation.entries) if (!suppressed[e] && system.entries[e].value > 0) found.add(e);
  }
  return [...found].sort((a, b) => a - b);
}

/** Adds complementary suppressions until no hidden number is pinned by linear algebra alone. */
export function protectAlgebraically(system: TableSystem, start: boolean[], cost: CostOf): boolean[] {
  const suppressed = [...start];
  for (;;) {
    const pinned = linearlyDetermined(hiddenSystem(system, suppressed));
    if (pinned.length === 0) return suppressed;
    let added = protectionSet(system, suppressed, pinned[0], cost);
    if (added.length === 0) added = neighbours(system, suppressed, pinned[0]);
    if (added.length === 0) return suppressed; // nothing left to hide; the LP audit reports it
    for (const e of added) suppressed[e] = true;
  }
}

/**
 * Audits with the attacker LP and keeps adding suppressions until every hidden number's interval is
 * at least REQUIRED_WIDTH wide. Each round hides at least one more positive number, so it ends; with
 * every positive number hidden the published values are all zero and any table can be scaled up.
 */
export function auditUntilSafe(system: TableSystem, start: boolean[], cost: CostOf): boolean[] {
  const suppressed = [...start];
  for (;;) {
    const weak = firstNarrowEntry(system, suppressed, REQUIRED_WIDTH);
    if (weak === null) return suppressed;
    let added = protectionSet(system, suppressed, weak, cost);
    if (added.length === 0) added = neighbours(system, suppressed, weak);
    if (added.length === 0) {
      const left = system.entries.findIndex((entry, e) => !suppressed[e] && entry.value > 0);
      if (left < 0) return suppressed;
      added = [left];
    }
    for (const e of added) suppressed[e] = true;
  }
}

// Complementary suppression for any additive table structure (linked views included), by LP.
//
// To protect a hidden number k, look for a second table that agrees with everything still published
// and in which k is larger by `rise`: a movement δ with δ_k = rise, every additivity relation holding
// for δ, and every hidden number staying ≥ 1 (the informed reader knows zeros show). Published numbers
// that δ touches must be hidden too; minimising their cost picks a cheap complementary set (the
// protection LP of Fischetti & Salazar-González 2000 with an upper protection level, relaxed to one
// cell at a time — from memory). The LP is always feasible: scaling every positive number by
// (1 + rise / value_k) satisfies every relation, keeps every count ≥ 1 and leaves zeros at zero.

import { type LpRow, solveLp } from "../lp-solver";
import { firstUnsafeEntry, HIDDEN_LOWER_BOUND } from "./attacker";
import { echelon, hiddenSystem, linearlyDetermined } from "./linear-algebra";
import type { TableSystem } from "./table-system";

/**
 * Every hidden number must admit at least this many whole values besides its own (so a ± 1 is
 * possible and it is never recoverable exactly); small counts must moreover reach the threshold.
 */
export const REQUIRED_WIDTH = 1;

export type CostOf = (entry: number) => number;

/** How far up the target must be able to move: to the threshold for a small count, else by one. */
export function requiredRise(value: number, threshold: number): number {
  return value < threshold ? threshold - value : REQUIRED_WIDTH;
}

/** Published entries that must also be hidden so that `target` can rise by `rise`. */
export function protectionSet(
  system: TableSystem,
  suppressed: boolean[],
  target: number,
  rise: number,
  cost: CostOf,
): number[] {
  // Columns: per positive entry other than the target an up and (if it can fall at all) a down
  // movement, free of cost when already hidden. Published zeros get no column: they stay zero.
  type Column = { entry: number; sign: 1 | -1; cost: number };
  const columns: Column[] = [];
  system.entries.forEach((entry, e) => {
    if (e === target || entry.value <= 0) return;
    const c = suppressed[e] ? 0 : cost(e);
    columns.push({ entry: e, sign: 1, cost: c });
    if (entry.value > HIDDEN_LOWER_BOUND) columns.push({ entry: e, sign: -1, cost: c });
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
      if (e === target) b -= coefficient * rise;
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
  const lpRows: LpRow[] = kept.map((r, k) => ({ name: `r${k}`, equal: rhs[r] }));
  // A number may fall by at most value − 1: it stays ≥ 1.
  columns.forEach((col, v) => {
    if (col.sign < 0) lpRows.push({ name: `b${v}`, max: system.entries[col.entry].value - HIDDEN_LOWER_BOUND });
  });
  const answer = solveLp({
    sense: "min",
    rows: lpRows,
    columns: columns.map((col, v) => {
      const coefficients: Record<string, number> = {};
      kept.forEach((r, k) => {
        if (rows[r][v] !== 0) coefficients[`r${k}`] = rows[r][v];
      });
      if (col.sign < 0) coefficients[`b${v}`] = 1;
      return { name: `x${v}`, objective: col.cost, coefficients };
    }),
  });
  if (!answer.feasible || !answer.bounded) return [];
  const movement = new Map<number, number>();
  columns.forEach((col, v) => {
    if (!suppressed[col.entry])
      movement.set(col.entry, (movement.get(col.entry) ?? 0) + col.sign * (answer.values.get(`x${v}`) ?? 0));
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
    let added = protectionSet(system, suppressed, pinned[0], REQUIRED_WIDTH, cost);
    if (added.length === 0) added = neighbours(system, suppressed, pinned[0]);
    if (added.length === 0) return suppressed; // nothing left to hide; the LP audit reports it
    for (const e of added) suppressed[e] = true;
  }
}

/**
 * Audits with the informed attacker LP and keeps adding suppressions until every hidden number meets
 * the rule (firstUnsafeEntry). Each round hides at least one more positive number, so it ends; with
 * every positive number hidden the published values are all zero and any table can be scaled up.
 */
export function auditUntilSafe(system: TableSystem, start: boolean[], cost: CostOf, threshold: number): boolean[] {
  const suppressed = [...start];
  const provenSafe = new Set<number>(); // hiding more never makes a safe number unsafe
  for (;;) {
    const weak = firstUnsafeEntry(system, suppressed, threshold, provenSafe);
    if (weak === null) return suppressed;
    const rise = requiredRise(system.entries[weak].value, threshold);
    let added = protectionSet(system, suppressed, weak, rise, cost);
    if (added.length === 0) added = neighbours(system, suppressed, weak);
    if (added.length === 0) {
      const left = system.entries.findIndex((entry, e) => !suppressed[e] && entry.value > 0);
      if (left < 0) return suppressed;
      added = [left];
    }
    for (const e of added) suppressed[e] = true;
  }
}

/**
 * Removes complementary suppressions that turn out not to be needed: tries to publish each hidden
 * number that is not a primary suppression again, dearest first, and keeps it published when the
 * audit still passes. Suppression stays as small as the rule allows for the greedy order; the
 * result passes the audit by construction. At most `maxTries` numbers are tried (each try is one audit).
 */
export function dropUnneeded(
  system: TableSystem,
  suppressed: boolean[],
  primary: boolean[],
  cost: CostOf,
  threshold: number,
  maxTries = 40,
): boolean[] {
  const result = [...suppressed];
  const candidates = result
    .map((hidden, e) => (hidden && !primary[e] ? e : -1))
    .filter((e) => e >= 0)
    .sort((a, b) => cost(b) - cost(a) || a - b)
    .slice(0, maxTries);
  for (const e of candidates) {
    result[e] = false;
    if (firstUnsafeEntry(system, result, threshold) !== null) result[e] = true;
  }
  return result;
}

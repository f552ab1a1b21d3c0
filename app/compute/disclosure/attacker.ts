// The attacker problem: for each hidden number, the smallest and largest value it can take in any
// table that agrees with everything published (Hundepool et al. 2012, ch. 7, "audit" of a suppression
// pattern — from memory). The attacker is INFORMED: they know the rules, and zeros are always shown,
// so every hidden number is at least 1 (not merely ≥ 0). Integrality is ignored: the LP interval is
// what a careful reader can prove, and for two-way tables its end points are whole numbers anyway.
//
// A hidden number with true value a is safe when its interval contains a second whole number
// (a − 1 or a + 1: not recoverable exactly) and, if it is a small count (1 … threshold − 1), when its
// maximum reaches the threshold (the reader cannot prove the group is small).

import { solveLinearProgram } from "../lp-solver";
import { connectedGroups, type HiddenSystem, hiddenSystem } from "./linear-algebra";
import type { TableSystem } from "./table-system";

/** What the reader knows about every hidden number: it is at least this (zeros are shown). */
export const HIDDEN_LOWER_BOUND = 1;

export interface AttackerBound {
  entry: number;
  min: number;
  /** Infinity when nothing published caps the hidden number. */
  max: number;
}

const EPS = 1e-6;
const snap = (x: number) => (Math.abs(x - Math.round(x)) < EPS ? Math.round(x) : x);

/** The rule a hidden number with true value `value` must meet, given its proven interval. */
export function isSafeInterval(value: number, min: number, max: number, threshold: number): boolean {
  if (value < threshold && max < threshold - EPS) return false;
  return max >= value + 1 - EPS || min <= value - 1 + EPS;
}

/** One connected group of hidden numbers in the shifted variables z = y − 1 ≥ 0. */
interface ShiftedGroup {
  /** Entry index per local unknown. */
  entries: number[];
  rows: number[][];
  rhs: number[];
}

function shiftedGroups(system: TableSystem, suppressed: boolean[]): ShiftedGroup[] {
  suppressed.forEach((hidden, e) => {
    if (hidden && system.entries[e].value < HIDDEN_LOWER_BOUND) {
      throw new RangeError("a zero is hidden: the reader is told zeros always show");
    }
  });
  const hidden: HiddenSystem = hiddenSystem(system, suppressed);
  return connectedGroups(hidden).map((group) => {
    const rows = group.rows.map((r) => group.unknowns.map((u) => hidden.rows[r][u]));
    const rhs = group.rows.map((r, k) => hidden.rhs[r] - HIDDEN_LOWER_BOUND * rows[k].reduce((a, c) => a + c, 0));
    return { entries: group.unknowns.map((u) => hidden.unknowns[u]), rows, rhs };
  });
}

type Extreme = { status: "unbounded" } | { status: "optimal"; values: number[] };

function extreme(group: ShiftedGroup, local: number, sense: "min" | "max"): Extreme {
  const objective = group.entries.map((_, v) => (v === local ? 1 : 0));
  const answer = solveLinearProgram({ sense, objective, rows: group.rows, rhs: group.rhs });
  if (answer.status === "unbounded") return { status: "unbounded" };
  if (answer.status === "infeasible") throw new RangeError("published numbers admit no table");
  return { status: "optimal", values: answer.values.map((z) => snap(z + HIDDEN_LOWER_BOUND)) };
}

export function attackerBounds(system: TableSystem, suppressed: boolean[]): AttackerBound[] {
  const bounds: AttackerBound[] = [];
  for (const group of shiftedGroups(system, suppressed)) {
    group.entries.forEach((entry, local) => {
      if (group.rows.length === 0) {
        bounds.push({ entry, min: HIDDEN_LOWER_BOUND, max: Infinity });
        return;
      }
      const low = extreme(group, local, "min");
      const high = extreme(group, local, "max");
      bounds.push({
        entry,
        min: low.status === "optimal" ? Math.max(HIDDEN_LOWER_BOUND, low.values[local]) : HIDDEN_LOWER_BOUND,
        max: high.status === "optimal" ? high.values[local] : Infinity,
      });
    });
  }
  return bounds.sort((a, b) => a.entry - b.entry);
}

/**
 * First hidden entry that breaks the rule (isSafeInterval), or null when all are safe. Cheaper than
 * attackerBounds: every LP optimum is a whole table consistent with what is published, so it widens
 * the known interval of every hidden number of its group at once; the true table is one such table
 * too. An LP is solved only for numbers the witnesses so far do not already prove safe, the maximum
 * first (it settles small counts and most others), the minimum only when still needed.
 * `provenSafe` (optional, updated) lists entries already proven safe under a pattern that hid no more
 * than this one: hiding more only removes constraints, so they stay safe and are skipped.
 */
export function firstUnsafeEntry(
  system: TableSystem,
  suppressed: boolean[],
  threshold: number,
  provenSafe?: Set<number>,
): number | null {
  for (const group of shiftedGroups(system, suppressed)) {
    const value = group.entries.map((e) => system.entries[e].value);
    const low = [...value];
    const high = [...value];
    const safe = (v: number) => isSafeInterval(value[v], low[v], high[v], threshold);
    const consistent = (values: number[]) =>
      group.rows.every(
        (row, r) =>
          Math.abs(row.reduce((acc, c, v) => acc + c * (values[v] - HIDDEN_LOWER_BOUND), 0) - group.rhs[r]) < EPS,
      ) && values.every((x) => x > HIDDEN_LOWER_BOUND - EPS);
    for (let local = 0; local < group.entries.length; local++) {
      if (group.rows.length === 0) continue; // unconstrained: [1, ∞)
      if (provenSafe?.has(group.entries[local])) continue;
      for (const sense of ["max", "min"] as const) {
        if (safe(local)) break;
        const answer = extreme(group, local, sense);
        if (answer.status === "unbounded") {
          if (sense === "max") high[local] = Infinity;
          continue;
        }
        const values = answer.values;
        if (sense === "max") high[local] = Math.max(high[local], values[local]);
        else low[local] = Math.min(low[local], values[local]);
        if (consistent(values)) {
          values.forEach((x, v) => {
            low[v] = Math.min(low[v], x);
            high[v] = Math.max(high[v], x);
          });
        }
      }
      if (!safe(local)) return group.entries[local];
      provenSafe?.add(group.entries[local]);
    }
  }
  return null;
}

// The attacker problem: for each hidden number, the smallest and largest value it can take in any
// non-negative table that agrees with everything published (Hundepool et al. 2012, ch. 7, "audit" of a
// suppression pattern — from memory). Integrality is ignored on purpose: the LP interval is what a
// careful reader can prove, and for two-way tables its end points are whole numbers anyway.

import { solveLinearProgram } from "../lp-solver";
import { connectedGroups, hiddenSystem } from "./linear-algebra";
import type { TableSystem } from "./table-system";

export interface AttackerBound {
  entry: number;
  min: number;
  /** Infinity when nothing published caps the hidden number. */
  max: number;
}

const snap = (x: number) => (Math.abs(x - Math.round(x)) < 1e-6 ? Math.round(x) : x);

export function attackerBounds(system: TableSystem, suppressed: boolean[]): AttackerBound[] {
  const hidden = hiddenSystem(system, suppressed);
  const bounds: AttackerBound[] = [];
  for (const group of connectedGroups(hidden)) {
    const rows = group.rows.map((r) => group.unknowns.map((u) => hidden.rows[r][u]));
    const rhs = group.rows.map((r) => hidden.rhs[r]);
    group.unknowns.forEach((u, local) => {
      const objective = group.unknowns.map((_, v) => (v === local ? 1 : 0));
      const extreme = (sense: "min" | "max") => {
        if (rows.length === 0) return sense === "min" ? 0 : Infinity;
        const answer = solveLinearProgram({ sense, objective, rows, rhs });
        if (answer.status === "unbounded") return Infinity;
        if (answer.status === "infeasible") throw new RangeError("published numbers admit no table");
        return snap(answer.values[local]);
      };
      bounds.push({ entry: hidden.unknowns[u], min: Math.max(0, extreme("min")), max: extreme("max") });
    });
  }
  return bounds.sort((a, b) => a.entry - b.entry);
}

/**
 * First hidden entry whose attacker interval is narrower than `width`, or null when all are wide
 * enough. Cheaper than attackerBounds: every LP optimum is a whole table consistent with what is
 * published, so it widens the known interval of every hidden number at once; the LP for a number is
 * skipped when earlier witnesses (and the true table) already span `width`.
 */
export function firstNarrowEntry(system: TableSystem, suppressed: boolean[], width: number): number | null {
  const hidden = hiddenSystem(system, suppressed);
  for (const group of connectedGroups(hidden)) {
    const rows = group.rows.map((r) => group.unknowns.map((u) => hidden.rows[r][u]));
    const rhs = group.rows.map((r) => hidden.rhs[r]);
    const low = group.unknowns.map((u) => system.entries[hidden.unknowns[u]].value);
    const high = [...low];
    const wideEnough = (v: number) => high[v] - low[v] >= width;
    const consistent = (values: number[]) =>
      rows.every((row, r) => Math.abs(row.reduce((acc, c, v) => acc + c * values[v], 0) - rhs[r]) < 1e-6) &&
      values.every((x) => x > -1e-9);
    for (let local = 0; local < group.unknowns.length; local++) {
      if (rows.length === 0) continue; // unconstrained: [0, ∞)
      for (const sense of ["max", "min"] as const) {
        if (wideEnough(local)) break;
        const objective = group.unknowns.map((_, v) => (v === local ? 1 : 0));
        const answer = solveLinearProgram({ sense, objective, rows, rhs });
        if (answer.status === "unbounded") {
          high[local] = Infinity;
          continue;
        }
        if (answer.status === "infeasible") throw new RangeError("published numbers admit no table");
        const values = answer.values.map(snap);
        if (sense === "max") high[local] = Math.max(high[local], values[local]);
        else low[local] = Math.min(low[local], values[local]);
        if (consistent(values)) {
          values.forEach((x, v) => {
            low[v] = Math.min(low[v], x);
            high[v] = Math.max(high[v], x);
          });
        }
      }
      if (!wideEnough(local)) return hidden.unknowns[group.unknowns[local]];
    }
  }
  return null;
}

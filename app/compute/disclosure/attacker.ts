// The attacker problem: for each hidden number, the smallest and largest value it can take in any
// non-negative table that agrees with everything published (Hundepool et al. 2012, ch. 7, "audit" of a
// suppression pattern — from memory). Integrality is ignored on purpose: the LP interval is what a
// careful reader can prove, and for two-way tables its end points are whole numbers anyway.

import { connectedGroups, hiddenSystem } from "./linear-algebra";
import { solveLinearProgram } from "./lp-solver";
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

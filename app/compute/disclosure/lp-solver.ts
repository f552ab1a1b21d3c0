// Thin wrapper over javascript-lp-solver 1.0.3 (the product's LP solver). Two habits from DESIGN §3.5:
// equality rows handed to it are independent, and the objective is recomputed from the returned
// variable values instead of trusting `result`.

import solver from "javascript-lp-solver";

export interface LinearProgram {
  sense: "min" | "max";
  /** Objective coefficients per variable (missing = 0). */
  objective: number[];
  /** Independent equalities Σ rows[r][v]·x[v] = rhs[r]. */
  rows: ArrayLike<number>[];
  rhs: number[];
  /** Variables that may go negative; all others are ≥ 0. */
  free?: boolean[];
}

export type LinearProgramResult =
  | { status: "optimal"; objective: number; values: number[] }
  | { status: "unbounded" }
  | { status: "infeasible" };

export function solveLinearProgram(lp: LinearProgram): LinearProgramResult {
  const count = lp.objective.length;
  const constraints: Record<string, { equal: number }> = {};
  lp.rhs.forEach((b, r) => (constraints[`r${r}`] = { equal: b }));
  const variables: Record<string, Record<string, number>> = {};
  const unrestricted: Record<string, 1> = {};
  for (let v = 0; v < count; v++) {
    const column: Record<string, number> = {};
    if (lp.objective[v] !== 0) column.objective = lp.objective[v];
    lp.rows.forEach((row, r) => {
      if (row[v] !== 0) column[`r${r}`] = row[v];
    });
    variables[`x${v}`] = column;
    if (lp.free?.[v]) unrestricted[`x${v}`] = 1;
  }
  const answer = solver.Solve({ optimize: "objective", opType: lp.sense, constraints, variables, unrestricted }) as {
    feasible: boolean;
    bounded?: boolean;
    [name: string]: unknown;
  };
  if (!answer.feasible) return { status: "infeasible" };
  if (answer.bounded === false) return { status: "unbounded" };
  const values = Array.from({ length: count }, (_, v) => {
    const x = answer[`x${v}`];
    return typeof x === "number" ? x : 0;
  });
  const objective = values.reduce((acc, x, v) => acc + x * lp.objective[v], 0);
  return { status: "optimal", objective, values };
}

// The one wrapper over javascript-lp-solver 1.0.3 (the product's LP solver), shared by the allocator's
// cut LP and the disclosure audit. Habits it keeps for both: the model is plain JSON built here, equality
// rows handed to it are independent (the caller's job), and objectives are recomputed by the caller from
// the returned variable values instead of trusting the solver's `result`.
import solver from "javascript-lp-solver";

export interface LpRow {
  name: string;
  max?: number;
  min?: number;
  equal?: number;
}

export interface LpColumn {
  name: string;
  /** Objective coefficient (0 = not in the objective). */
  objective: number;
  coefficients: Record<string, number>;
  /** May go negative; all other columns are ≥ 0. */
  free?: boolean;
}

export interface LpModel {
  sense: "min" | "max";
  rows: LpRow[];
  columns: LpColumn[];
  /** Passed to the solver as its `options` (e.g. `{ presolve: false }`). */
  options?: Record<string, unknown>;
}

export interface LpSolution {
  feasible: boolean;
  /** false when the solver reports the objective unbounded */
  bounded: boolean;
  /** Every column's value (0 where the solver left it out); empty when infeasible. */
  values: Map<string, number>;
}

export function solveLp(model: LpModel): LpSolution {
  const constraints: Record<string, { max?: number; min?: number; equal?: number }> = {};
  for (const r of model.rows) {
    const row: { max?: number; min?: number; equal?: number } = {};
    if (r.equal !== undefined) row.equal = r.equal;
    if (r.min !== undefined) row.min = r.min;
    if (r.max !== undefined) row.max = r.max;
    constraints[r.name] = row;
  }
  const variables: Record<string, Record<string, number>> = {};
  const unrestricted: Record<string, 1> = {};
  for (const c of model.columns) {
    variables[c.name] = c.objective !== 0 ? { __objective: c.objective, ...c.coefficients } : { ...c.coefficients };
    if (c.free) unrestricted[c.name] = 1;
  }
  const answer = solver.Solve({
    optimize: "__objective",
    opType: model.sense,
    constraints,
    variables,
    unrestricted,
    ...(model.options ? { options: model.options } : {}),
  }) as { feasible: boolean; bounded?: boolean; [name: string]: unknown };
  const values = new Map<string, number>();
  const feasible = answer.feasible === true;
  if (feasible)
    for (const c of model.columns) {
      const x = answer[c.name];
      values.set(c.name, typeof x === "number" ? x : 0);
    }
  return { feasible, bounded: answer.bounded !== false, values };
}

/** A linear program in dense equality form: optimise objective·x subject to rows·x = rhs. */
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
  const columns: LpColumn[] = lp.objective.map((objective, v) => {
    const coefficients: Record<string, number> = {};
    lp.rows.forEach((row, r) => {
      if (row[v] !== 0) coefficients[`r${r}`] = row[v];
    });
    return { name: `x${v}`, objective, coefficients, free: lp.free?.[v] === true };
  });
  const answer = solveLp({
    sense: lp.sense,
    rows: lp.rhs.map((b, r) => ({ name: `r${r}`, equal: b })),
    columns,
  });
  if (!answer.feasible) return { status: "infeasible" };
  if (!answer.bounded) return { status: "unbounded" };
  const values = columns.map((c) => answer.values.get(c.name) ?? 0);
  const objective = values.reduce((acc, x, v) => acc + x * lp.objective[v], 0);
  return { status: "optimal", objective, values };
}

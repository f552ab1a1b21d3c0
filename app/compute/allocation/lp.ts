/** Thin wrapper over javascript-lp-solver: builds a JSON model and returns variable values only. */
import solver from "javascript-lp-solver";

export interface LpRow {
  name: string;
  max?: number;
  min?: number;
}

export interface LpColumn {
  name: string;
  objective: number;
  coefficients: Record<string, number>;
}

export interface LpResult {
  feasible: boolean;
  values: Map<string, number>;
}

/** Maximise Σ objective·x over x ≥ 0 subject to the rows. Objectives are recomputed by the caller from values. */
export function maximise(rows: LpRow[], columns: LpColumn[]): LpResult {
  const constraints: Record<string, { max?: number; min?: number }> = {};
  for (const r of rows)
    constraints[r.name] =
      r.min !== undefined && r.max !== undefined
        ? { min: r.min, max: r.max }
        : r.max !== undefined
          ? { max: r.max }
          : { min: r.min };
  const variables: Record<string, Record<string, number>> = {};
  for (const c of columns) variables[c.name] = { __objective: c.objective, ...c.coefficients };
  const model = {
    optimize: "__objective",
    opType: "max" as const,
    constraints,
    variables,
    options: { presolve: false },
  };
  const raw = solver.Solve(model) as Record<string, unknown>;
  const values = new Map<string, number>();
  const feasible = raw.feasible === true;
  if (feasible)
    for (const c of columns)
      values.set(c.name, Math.max(0, typeof raw[c.name] === "number" ? (raw[c.name] as number) : 0));
  return { feasible, values };
}

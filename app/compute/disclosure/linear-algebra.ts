// What an attacker can derive from a published table by linear algebra alone: the hidden entries
// satisfy A·y = b, where b collects the published numbers. Redundant rows are dropped so that the LP
// solver only ever sees independent equalities (javascript-lp-solver 1.0.3 can misreport with redundant
// equality rows, docs/methods.md).

import type { TableSystem } from "./table-system";

const EPS = 1e-9;

export interface HiddenSystem {
  /** Entry indices of the hidden (suppressed) numbers; position u in this list is unknown u. */
  unknowns: number[];
  /** Independent equalities over the unknowns: Σ rows[r][u]·y[u] = rhs[r]. */
  rows: Float64Array[];
  rhs: number[];
}

/** Builds the attacker's equalities from the published entries and keeps an independent subset. */
export function hiddenSystem(system: TableSystem, suppressed: boolean[]): HiddenSystem {
  const unknowns: number[] = [];
  const position = new Map<number, number>();
  suppressed.forEach((hidden, e) => {
    if (hidden) position.set(e, unknowns.push(e) - 1);
  });
  const candidateRows: Float64Array[] = [];
  const candidateRhs: number[] = [];
  for (const relation of system.relations) {
    const row = new Float64Array(unknowns.length);
    let rhs = 0;
    let touchesHidden = false;
    relation.entries.forEach((e, t) => {
      const u = position.get(e);
      if (u === undefined) rhs -= relation.coefficients[t] * system.entries[e].value;
      else {
        row[u] += relation.coefficients[t];
        touchesHidden = true;
      }
    });
    if (!touchesHidden) {
      if (Math.abs(rhs) > EPS) throw new RangeError("published numbers do not add up");
      continue;
    }
    candidateRows.push(row);
    candidateRhs.push(rhs);
  }
  const { kept } = echelon(candidateRows, candidateRhs);
  return { unknowns, rows: kept.map((r) => candidateRows[r]), rhs: kept.map((r) => candidateRhs[r]) };
}

interface Echelon {
  /** Indices of the input rows that are linearly independent (in input order). */
  kept: number[];
  /** Reduced rows (fully reduced: RREF), each with its pivot column and right-hand side. */
  basis: { row: Float64Array; pivot: number; rhs: number }[];
}

/** Gaussian elimination in input order; rows that reduce to zero are redundant and dropped. */
export function echelon(rows: Float64Array[], rhs: number[]): Echelon {
  const kept: number[] = [];
  const basis: Echelon["basis"] = [];
  rows.forEach((input, r) => {
    const row = Float64Array.from(input);
    let b = rhs[r];
    for (const base of basis) {
      const factor = row[base.pivot];
      if (Math.abs(factor) > EPS) {
        for (let u = 0; u < row.length; u++) row[u] -= factor * base.row[u];
        b -= factor * base.rhs;
      }
    }
    let pivot = -1;
    let best = EPS;
    for (let u = 0; u < row.length; u++) {
      if (Math.abs(row[u]) > best) {
        best = Math.abs(row[u]);
        pivot = u;
      }
    }
    if (pivot < 0) {
      if (Math.abs(b) > 1e-6) throw new RangeError("published numbers do not add up");
      return;
    }
    const scale = row[pivot];
    for (let u = 0; u < row.length; u++) row[u] /= scale;
    b /= scale;
    // Keep the basis fully reduced so each pivot column is zero in every other basis row.
    for (const base of basis) {
      const factor = base.row[pivot];
      if (Math.abs(factor) > EPS) {
        for (let u = 0; u < row.length; u++) base.row[u] -= factor * row[u];
        base.rhs -= factor * b;
      }
    }
    basis.push({ row, pivot, rhs: b });
    kept.push(r);
  });
  return { kept, basis };
}

/**
 * Hidden entries pinned by the equalities alone (their unit vector lies in the row space). When every
 * hidden number is positive the true table is inside the feasible region, so these are exactly the
 * entries whose LP interval has zero width.
 */
export function linearlyDetermined(hidden: HiddenSystem): number[] {
  const { basis } = echelon(hidden.rows, hidden.rhs);
  const determined: number[] = [];
  for (const base of basis) {
    let others = 0;
    for (let u = 0; u < base.row.length; u++) if (u !== base.pivot && Math.abs(base.row[u]) > EPS) others++;
    if (others === 0) determined.push(hidden.unknowns[base.pivot]);
  }
  return determined.sort((a, b) => a - b);
}

/** Unknowns grouped by the equalities that connect them; independent groups are audited separately. */
export function connectedGroups(hidden: HiddenSystem): { unknowns: number[]; rows: number[] }[] {
  const parent = hidden.unknowns.map((_, u) => u);
  const find = (u: number): number => {
    if (parent[u] !== u) parent[u] = find(parent[u]);
    return parent[u];
  };
  hidden.rows.forEach((row) => {
    let first = -1;
    row.forEach((c, u) => {
      if (Math.abs(c) <= EPS) return;
      if (first < 0) first = u;
      else parent[find(u)] = find(first);
    });
  });
  const groups = new Map<number, { unknowns: number[]; rows: number[] }>();
  hidden.unknowns.forEach((_, u) => {
    const root = find(u);
    if (!groups.has(root)) groups.set(root, { unknowns: [], rows: [] });
    groups.get(root)!.unknowns.push(u);
  });
  hidden.rows.forEach((row, r) => {
    const u = row.findIndex((c) => Math.abs(c) > EPS);
    groups.get(find(u))!.rows.push(r);
  });
  return [...groups.values()];
}

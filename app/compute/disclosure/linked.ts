// Several tables published to the same reader, audited and protected together: tables that share
// cells or margins (a department table and the site table that sums it) and tables counted at
// different times (last week's and this week's), whose counts differ by a bounded change the reader
// is assumed to know. The reader is the informed one (attacker.ts): every hidden number is ≥ 1.
//
// What the reader can prove is an LP over everything published at once (Hundepool et al. 2012,
// Statistical Disclosure Control, Wiley, ch. 7, linked tables and the attacker problem — from memory):
// unknowns are the hidden numbers of every table (y ≥ 1); every table's additivity holds; a site
// table's cells are sums of its departments'; and for two tables in time Σ |after − before| over the
// cells is at most the declared change budget.
//
// Guarantee of protectLinked (tables already published stay as they were; new ones get more hidden):
//  1. every hidden number of every table, earlier ones included, meets the informed-reader rule against ALL the tables together: its interval
//     holds at least two whole numbers, and a small count's maximum reaches the threshold;
//  2. for every hidden cell of a later table of a change link, the reader cannot prove that it gained
//     or lost people since the earlier table (0 lies in the interval of its change) — so a reader who
//     knows that one particular worker changed stage cannot tell which hidden stage they moved to;
//  3. numbers for which 1 or 2 cannot hold however much more of the new tables is hidden (e.g. a cell
//     published as 0 last week, 1 person now, with a change budget below the threshold) are returned
//     as `unprotectable`: the caller must not publish that table as is (coarsen the grouping or
//     withhold it). The guarantee is against exactly the links passed in: a publication the caller
//     leaves out is not accounted for.

import { type LpColumn, type LpRow, solveLp } from "../lp-solver";
import { HIDDEN_LOWER_BOUND, isSafeInterval } from "./attacker";
import { protectByCycles, suppressionCost } from "./cycle-heuristic";
import { echelon } from "./linear-algebra";
import { auditUntilSafe } from "./protection-lp";
import type { EntryKind } from "./table-system";
import { flatTableSystem, validateCounts } from "./table-system";
import { effectiveThreshold, isSmallCount } from "./threshold";

/** The published form of one table (the same shape protectTable returns). */
export interface PublishedCounts {
  cells: (number | null)[][];
  rowTotals: (number | null)[];
  columnTotals: (number | null)[];
  grandTotal: number | null;
}

export interface LinkedTable {
  rows: string[];
  columns: string[];
  /** The true counts (never published as such). */
  counts: number[][];
  /** Set for a table already published to this reader (e.g. last week's): it is kept as it is. */
  published?: PublishedCounts;
}

export type TableLink =
  /** Rows of table `parent` are sums of rows of table `detail` (parentOf[d] = parent row); same columns. */
  | { kind: "rollup"; detail: number; parent: number; parentOf: number[] }
  /**
   * Tables `before` and `after` have the same rows and columns, counted at two times; the reader knows
   * Σ |after − before| over the cells is at most maxCellChange (2 per worker who changed stage, 1 per
   * worker who joined or left). Declare the budget generously small: a smaller budget is a stronger reader.
   */
  | { kind: "change"; before: number; after: number; maxCellChange: number };

export interface LinkedInterval {
  /** Index of the table in the list passed in. */
  table: number;
  kind: EntryKind;
  row: number | null;
  column: number | null;
  /** "count": the hidden number itself; "change": after − before of a cell, for the `after` table. */
  quantity: "count" | "change";
  value: number;
  min: number;
  /** Infinity when nothing published caps it. */
  max: number;
}

export interface ProtectedLinked {
  tables: (PublishedCounts & { rows: string[]; columns: string[]; threshold: number })[];
  /** Hidden numbers (or changes) the rule cannot be met for; see the guarantee above. */
  unprotectable: LinkedInterval[];
  threshold: number;
}

interface Layout {
  offset: number[];
  /** Per entry: table, kind, row, column, value. */
  entries: { table: number; kind: EntryKind; row: number | null; column: number | null; value: number }[];
  relations: { entries: number[]; coefficients: number[] }[];
  /** Per change link: pairs of cell entries (before, after) and the budget. */
  changes: { pairs: [number, number][]; budget: number; after: number }[];
  /** Cost of hiding each entry (cells by count, totals dearer). */
  cost: number[];
}

const EPS = 1e-6;

function entryIndex(layout: Layout, tables: LinkedTable[], t: number, i: number, j: number): number {
  return layout.offset[t] + i * (tables[t].columns.length + 1) + j;
}

function buildLayout(tables: LinkedTable[], links: TableLink[]): Layout {
  const layout: Layout = { offset: [], entries: [], relations: [], changes: [], cost: [] };
  tables.forEach((table, t) => {
    validateCounts(table.rows, table.columns, table.counts);
    const system = flatTableSystem(table.counts, table.columns.length);
    const offset = layout.entries.length;
    layout.offset.push(offset);
    const grand = system.entries[system.entries.length - 1].value;
    system.entries.forEach((entry, e) => {
      layout.entries.push({ table: t, kind: entry.kind, row: entry.row, column: entry.column, value: entry.value });
      layout.cost.push(suppressionCost(system, e, grand));
    });
    for (const relation of system.relations)
      layout.relations.push({ entries: relation.entries.map((e) => e + offset), coefficients: relation.coefficients });
  });
  for (const link of links) {
    const check = (t: number) => {
      if (!Number.isInteger(t) || t < 0 || t >= tables.length)
        throw new RangeError(`link names table ${t}, which is not passed`);
    };
    if (link.kind === "rollup") {
      check(link.detail);
      check(link.parent);
      const d = tables[link.detail];
      const p = tables[link.parent];
      const n = d.columns.length;
      if (p.columns.length !== n) throw new RangeError("a rollup's tables must have the same columns");
      if (link.parentOf.length !== d.rows.length)
        throw new RangeError(`parentOf has ${link.parentOf.length} entries but there are ${d.rows.length} detail rows`);
      for (let q = 0; q < p.rows.length; q++) {
        const members = link.parentOf.flatMap((x, r) => (x === q ? [r] : []));
        for (let j = 0; j < n; j++) {
          const total = members.reduce((acc, r) => acc + d.counts[r][j], 0);
          if (total !== p.counts[q][j])
            throw new RangeError(`parent row ${q}, column ${j} is ${p.counts[q][j]} but its rows sum to ${total}`);
        }
        for (let j = 0; j <= n; j++) {
          const parts = members.map((r) => entryIndex(layout, tables, link.detail, r, j));
          layout.relations.push({
            entries: [...parts, entryIndex(layout, tables, link.parent, q, j)],
            coefficients: [...parts.map(() => 1), -1],
          });
        }
      }
      for (let j = 0; j <= n; j++) {
        layout.relations.push({
          entries: [
            entryIndex(layout, tables, link.detail, d.rows.length, j),
            entryIndex(layout, tables, link.parent, p.rows.length, j),
          ],
          coefficients: [1, -1],
        });
      }
    } else {
      check(link.before);
      check(link.after);
      const b = tables[link.before];
      const a = tables[link.after];
      if (b.rows.length !== a.rows.length || b.columns.length !== a.columns.length)
        throw new RangeError("a change link's tables must have the same shape");
      if (!(link.maxCellChange >= 0)) throw new RangeError("maxCellChange must be ≥ 0");
      const actual = a.counts.flat().reduce((s, v, k) => s + Math.abs(v - b.counts.flat()[k]), 0);
      if (actual > link.maxCellChange)
        throw new RangeError(`the counts changed by ${actual}, more than maxCellChange ${link.maxCellChange}`);
      const pairs: [number, number][] = [];
      a.counts.forEach((line, i) => {
        line.forEach((_, j) => {
          pairs.push([entryIndex(layout, tables, link.before, i, j), entryIndex(layout, tables, link.after, i, j)]);
        });
      });
      layout.changes.push({ pairs, budget: link.maxCellChange, after: link.after });
    }
  }
  return layout;
}

/** A quantity the audit bounds: a hidden entry, or the change of a cell hidden in a later table. */
type Quantity = { entry: number; change: number | null };

interface AttackerModel {
  solve: (q: Quantity, sense: "min" | "max") => { status: "unbounded" } | { status: "optimal"; x: number[] };
  /** Value of a quantity in a solution vector (or in the true table when x is null). */
  valueOf: (q: Quantity, x: number[] | null) => number;
}

/**
 * The informed reader's LP over every table at once. Unknowns: z_e = y_e − 1 ≥ 0 per hidden entry,
 * and per change pair an up and a down part (after − before = up − down, Σ up + down ≤ budget).
 */
function attackerModel(layout: Layout, hidden: boolean[]): AttackerModel {
  const unknownOf = new Map<number, number>();
  hidden.forEach((h, e) => {
    if (!h) return;
    if (layout.entries[e].value < HIDDEN_LOWER_BOUND) throw new RangeError("a zero is hidden: zeros always show");
    unknownOf.set(e, unknownOf.size);
  });
  const changeBase: number[] = [];
  let count = unknownOf.size;
  for (const c of layout.changes) {
    changeBase.push(count);
    count += 2 * c.pairs.length;
  }
  const rows: Float64Array[] = [];
  const rhs: number[] = [];
  const equality = (terms: [number, number][]) => {
    const row = new Float64Array(count);
    let b = 0;
    let used = false;
    for (const [e, coefficient] of terms) {
      const u = unknownOf.get(e);
      if (u === undefined) b -= coefficient * layout.entries[e].value;
      else {
        row[u] += coefficient;
        b -= coefficient * HIDDEN_LOWER_BOUND;
        used = true;
      }
    }
    return { row, b, used };
  };
  for (const relation of layout.relations) {
    const { row, b, used } = equality(relation.entries.map((e, k) => [e, relation.coefficients[k]]));
    if (!used) {
      if (Math.abs(b) > EPS) throw new RangeError("published numbers do not add up");
      continue;
    }
    rows.push(row);
    rhs.push(b);
  }
  layout.changes.forEach((c, l) => {
    c.pairs.forEach(([before, after], k) => {
      const { row, b } = equality([
        [after, 1],
        [before, -1],
      ]);
      row[changeBase[l] + 2 * k] = -1;
      row[changeBase[l] + 2 * k + 1] = 1;
      rows.push(row);
      rhs.push(b);
    });
  });
  const { kept } = echelon(rows, rhs);
  const lpRows: LpRow[] = kept.map((r, k) => ({ name: `e${k}`, equal: rhs[r] }));
  layout.changes.forEach((c, l) => {
    lpRows.push({ name: `budget${l}`, max: c.budget });
  });
  const columnCoefficients = Array.from({ length: count }, (_, v) => {
    const coefficients: Record<string, number> = {};
    kept.forEach((r, k) => {
      if (rows[r][v] !== 0) coefficients[`e${k}`] = rows[r][v];
    });
    return coefficients;
  });
  layout.changes.forEach((c, l) => {
    for (let v = changeBase[l]; v < changeBase[l] + 2 * c.pairs.length; v++) columnCoefficients[v][`budget${l}`] = 1;
  });
  const entryValue = (e: number, x: number[] | null) => {
    const u = unknownOf.get(e);
    if (u === undefined || x === null) return layout.entries[e].value;
    return x[u] + HIDDEN_LOWER_BOUND;
  };
  const objectiveOf = (q: Quantity): Map<number, number> => {
    if (q.change === null) return new Map([[unknownOf.get(q.entry)!, 1]]);
    const [l, k] = [q.change >> 16, q.change & 0xffff];
    return new Map([
      [changeBase[l] + 2 * k, 1],
      [changeBase[l] + 2 * k + 1, -1],
    ]);
  };
  return {
    valueOf: (q, x) => {
      if (q.change === null) return entryValue(q.entry, x);
      const [before, after] = layout.changes[q.change >> 16].pairs[q.change & 0xffff];
      return entryValue(after, x) - entryValue(before, x);
    },
    solve: (q, sense) => {
      const objective = objectiveOf(q);
      const columns: LpColumn[] = columnCoefficients.map((coefficients, v) => ({
        name: `x${v}`,
        objective: objective.get(v) ?? 0,
        coefficients,
      }));
      const answer = solveLp({ sense, rows: lpRows, columns });
      if (!answer.feasible) throw new RangeError("published numbers admit no tables");
      if (!answer.bounded) return { status: "unbounded" };
      return { status: "optimal", x: columns.map((c) => answer.values.get(c.name) ?? 0) };
    },
  };
}

function quantities(layout: Layout, hidden: boolean[]): Quantity[] {
  const out: Quantity[] = [];
  hidden.forEach((h, e) => {
    if (h) out.push({ entry: e, change: null });
  });
  layout.changes.forEach((c, l) => {
    c.pairs.forEach(([, after], k) => {
      if (hidden[after]) out.push({ entry: after, change: (l << 16) | k });
    });
  });
  return out;
}

const snap = (x: number) => (Math.abs(x - Math.round(x)) < EPS ? Math.round(x) : x);

function safeQuantity(q: Quantity, value: number, min: number, max: number, threshold: number) {
  if (q.change !== null) return min <= EPS && max >= -EPS;
  return isSafeInterval(value, min, max, threshold);
}

/**
 * Bounds every quantity; with `stopAtFirstUnsafe` it returns as soon as one is unsafe (witness tables
 * from earlier LP optima skip LPs that cannot change the verdict).
 */
function bound(
  layout: Layout,
  hidden: boolean[],
  threshold: number,
  onlyUnsafe: boolean,
  skip: Set<string>,
  only?: string,
) {
  const model = attackerModel(layout, hidden);
  const qs = quantities(layout, hidden).filter((q) => !skip.has(key(q)) && (only === undefined || key(q) === only));
  const low = qs.map((q) => model.valueOf(q, null));
  const high = [...low];
  const values = [...low];
  const witness = (x: number[]) => {
    qs.forEach((q, k) => {
      const v = snap(model.valueOf(q, x));
      low[k] = Math.min(low[k], v);
      high[k] = Math.max(high[k], v);
    });
  };
  const out: { q: Quantity; value: number; min: number; max: number }[] = [];
  for (let k = 0; k < qs.length; k++) {
    const safe = () => safeQuantity(qs[k], values[k], low[k], high[k], threshold);
    for (const sense of ["max", "min"] as const) {
      if (onlyUnsafe && safe()) break;
      const answer = model.solve(qs[k], sense);
      if (answer.status === "unbounded") {
        if (sense === "max") high[k] = Infinity;
        else low[k] = -Infinity;
        continue;
      }
      witness(answer.x);
    }
    if (!onlyUnsafe || !safe()) out.push({ q: qs[k], value: values[k], min: low[k], max: high[k] });
    if (onlyUnsafe && out.length > 0) return out;
  }
  return out;
}

const key = (q: Quantity) => `${q.entry}:${q.change ?? ""}`;

function toInterval(layout: Layout, r: { q: Quantity; value: number; min: number; max: number }): LinkedInterval {
  const { table, kind, row, column } = layout.entries[r.q.entry];
  const min = r.q.change === null ? Math.max(HIDDEN_LOWER_BOUND, r.min) : r.min;
  return {
    table,
    kind,
    row,
    column,
    quantity: r.q.change === null ? "count" : "change",
    value: r.value,
    min,
    max: r.max,
  };
}

/** Flat layout of a published table (same order as flatTableSystem), null where hidden. */
function flatPublished(p: PublishedCounts): (number | null)[] {
  return [...p.cells.flatMap((line, i) => [...line, p.rowTotals[i]]), ...p.columnTotals, p.grandTotal];
}

function markPublished(layout: Layout, t: number, p: PublishedCounts, mask: boolean[]) {
  flatPublished(p).forEach((v, k) => {
    const e = layout.offset[t] + k;
    if (v !== null && v !== layout.entries[e].value)
      throw new RangeError(`table ${t} publishes a number that differs from its counts`);
    mask[e] = v === null;
  });
}

function hiddenMask(layout: Layout, tables: { published?: PublishedCounts }[]): boolean[] {
  const mask: boolean[] = [];
  tables.forEach((table, t) => {
    if (!table.published) throw new RangeError(`table ${t} has no published form to audit`);
    markPublished(layout, t, table.published, mask);
  });
  return mask;
}

/**
 * What the informed reader can prove from all the tables together: per hidden number its interval,
 * and per hidden cell of a change link's later table the interval of its change.
 */
export function auditLinked(
  tables: (LinkedTable & { published: PublishedCounts })[],
  links: TableLink[],
): LinkedInterval[] {
  const layout = buildLayout(tables, links);
  return bound(layout, hiddenMask(layout, tables), MAX_THRESHOLD, false, new Set()).map((r) => toInterval(layout, r));
}
// Full bounds need no threshold; any value works because nothing is skipped.
const MAX_THRESHOLD = Number.MAX_SAFE_INTEGER;

/**
 * Protects every table without `published` against all tables together (guarantee at the top).
 * Starts from each new table's primary suppressions and hides, one at a time, the cheapest published
 * positive number of the new tables that shares a relation with an unsafe one, until all are safe.
 */
export function protectLinked(
  tables: LinkedTable[],
  links: TableLink[],
  options?: { threshold?: number },
): ProtectedLinked {
  const threshold = effectiveThreshold(options?.threshold);
  const layout = buildLayout(tables, links);
  const fixed = tables.map((t) => t.published !== undefined);
  // Earlier tables as published; new ones start from their own single-table protection.
  const hidden: boolean[] = [];
  tables.forEach((table, t) => {
    if (table.published) {
      markPublished(layout, t, table.published, hidden);
      return;
    }
    const m = table.rows.length;
    const n = table.columns.length;
    const system = flatTableSystem(table.counts, n);
    const grand = system.entries[system.entries.length - 1].value;
    const primary = system.entries.map((entry) => isSmallCount(entry.value, threshold));
    const alone = auditUntilSafe(
      system,
      protectByCycles(system, m, n, primary),
      (e) => suppressionCost(system, e, grand),
      threshold,
    );
    alone.forEach((h, k) => {
      hidden[layout.offset[t] + k] = h;
    });
  });
  const free = (e: number) => !fixed[layout.entries[e].table] && !hidden[e] && layout.entries[e].value > 0;
  const skip = new Set<string>();
  const unprotectable: LinkedInterval[] = [];
  for (;;) {
    const [weak] = bound(layout, hidden, threshold, true, skip);
    if (!weak) break;
    // Could anything more help? Hide every free number and look again.
    const all = hidden.map((h, e) => h || free(e));
    const [best] = bound(layout, all, threshold, false, skip, key(weak.q));
    if (best && !safeQuantity(weak.q, best.value, best.min, best.max, threshold)) {
      skip.add(key(weak.q));
      unprotectable.push(toInterval(layout, best));
      continue;
    }
    const related = new Set<number>();
    const around = (e: number) => {
      for (const relation of layout.relations)
        if (relation.entries.includes(e)) for (const x of relation.entries) if (free(x)) related.add(x);
    };
    around(weak.q.entry);
    if (weak.q.change !== null) around(layout.changes[weak.q.change >> 16].pairs[weak.q.change & 0xffff][0]);
    if (related.size === 0)
      hidden.forEach((h, e) => {
        if (h) around(e);
      });
    if (related.size === 0)
      hidden.forEach((_, e) => {
        if (free(e)) related.add(e);
      });
    const pick = [...related].sort((a, b) => layout.cost[a] - layout.cost[b] || a - b)[0];
    if (pick === undefined) break;
    hidden[pick] = true;
  }
  return {
    tables: tables.map((table, t) => {
      const n = table.columns.length;
      const m = table.rows.length;
      const show = (i: number, j: number) => {
        const e = entryIndex(layout, tables, t, i, j);
        return hidden[e] ? null : layout.entries[e].value;
      };
      return {
        rows: [...table.rows],
        columns: [...table.columns],
        cells: table.rows.map((_, i) => table.columns.map((_, j) => show(i, j))),
        rowTotals: table.rows.map((_, i) => show(i, n)),
        columnTotals: table.columns.map((_, j) => show(m, j)),
        grandTotal: show(m, n),
        threshold,
      };
    }),
    unprotectable,
    threshold,
  };
}

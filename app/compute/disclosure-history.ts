// Publications of one organisation table over time, and the grouping rule (docs/consent-and-disclosure.md).
// A table is department × column counts linked to its site table. The next publication is protected
// against the latest earlier one of the same layout (a change link whose budget is the true
// Σ |after − before|: the strongest reader consistent with the truth), so a reader who keeps both
// cannot difference out one person; unchanged counts reuse the earlier publication as it is.

import {
  type ProtectedTable,
  type PublishedCounts,
  protectLinked,
  protectLinkedTables,
  type TableLink,
} from "./disclosure";

/** The counts under one publication (aggregates only) and the layout they are counted in. */
export interface TableCounts {
  rows: string[];
  /** Site key of each row. */
  parentOf: string[];
  columns: string[];
  counts: number[][];
  threshold: number;
}

export interface PublishedPair {
  detail: ProtectedTable;
  parent: ProtectedTable;
}

export interface StoredPublication {
  id: number;
  grouping: string;
  counts: TableCounts;
  published: PublishedPair;
  /** What the publication said about itself (e.g. why it is not linked to the one before). */
  note: string | null;
}

/**
 * Above this many department cells the over-time protection (one LP per hidden number and change,
 * repeated as numbers are hidden) is too slow for a page request; such tables are protected on their
 * own and the publication says so.
 */
export const OVER_TIME_MAX_CELLS = 80;

export type OverTimeResult =
  | { status: "ok"; published: PublishedPair; linkedTo: number | null; note: string | null }
  | { status: "withheld"; reason: string };

export function sameLayout(a: TableCounts, b: TableCounts): boolean {
  const eq = (x: string[], y: string[]) => x.length === y.length && x.every((v, i) => v === y[i]);
  return eq(a.rows, b.rows) && eq(a.parentOf, b.parentOf) && eq(a.columns, b.columns);
}

/** Same layout, threshold and counts: the earlier publication can be given again as it is. */
export function sameCounts(a: TableCounts, b: TableCounts): boolean {
  return (
    sameLayout(a, b) &&
    a.threshold === b.threshold &&
    a.counts.every((line, i) => line.every((v, j) => v === b.counts[i][j]))
  );
}

/** Σ |after − before| over the cells. */
export function cellChange(before: number[][], after: number[][]): number {
  return after.reduce((s, line, i) => s + line.reduce((t, v, j) => t + Math.abs(v - before[i][j]), 0), 0);
}

function siteTable(c: TableCounts): { rows: string[]; parentOf: number[]; counts: number[][] } {
  const rows = [...new Set(c.parentOf)];
  const parentOf = c.parentOf.map((p) => rows.indexOf(p));
  const counts = rows.map((_, q) =>
    c.columns.map((_, j) => c.counts.reduce((s, line, i) => s + (parentOf[i] === q ? line[j] : 0), 0)),
  );
  return { rows, parentOf, counts };
}

const publishedForm = (t: ProtectedTable): PublishedCounts => ({
  cells: t.cells,
  rowTotals: t.rowTotals,
  columnTotals: t.columnTotals,
  grandTotal: t.grandTotal,
});

/**
 * Protects `current` against `previous` (the latest earlier publication of this table to the same
 * readers, or null). Quantities the rule cannot be met for are never published: the table is withheld.
 */
export function protectOverTime(current: TableCounts, previous: StoredPublication | null): OverTimeResult {
  const site = siteTable(current);
  const fresh = (note: string | null): OverTimeResult => {
    const p = protectLinkedTables({
      detail: { rows: current.rows, columns: current.columns, counts: current.counts },
      parentOf: current.parentOf,
      threshold: current.threshold,
    });
    return { status: "ok", published: { detail: p.detail, parent: p.parent }, linkedTo: null, note };
  };
  if (!previous) return fresh(null);
  if (!sameLayout(current, previous.counts))
    return fresh("Departments or columns changed since the last publication, so this one is not linked to it.");
  if (current.rows.length * current.columns.length > OVER_TIME_MAX_CELLS)
    return fresh("This table is too large for the check against last publication; it is protected on its own.");
  const before = siteTable(previous.counts);
  const tables = [
    {
      rows: previous.counts.rows,
      columns: current.columns,
      counts: previous.counts.counts,
      published: publishedForm(previous.published.detail),
    },
    {
      rows: before.rows,
      columns: current.columns,
      counts: before.counts,
      published: publishedForm(previous.published.parent),
    },
    { rows: current.rows, columns: current.columns, counts: current.counts },
    { rows: site.rows, columns: current.columns, counts: site.counts },
  ];
  const links: TableLink[] = [
    { kind: "rollup", detail: 0, parent: 1, parentOf: before.parentOf },
    { kind: "rollup", detail: 2, parent: 3, parentOf: site.parentOf },
    { kind: "change", before: 0, after: 2, maxCellChange: cellChange(previous.counts.counts, current.counts) },
  ];
  const result = protectLinked(tables, links, { threshold: current.threshold });
  if (result.unprotectable.length > 0)
    return {
      status: "withheld",
      reason:
        "Since the last publication a few people moved between small groups; publishing the new figures would show who. They will show again once the groups have grown or the grouping is coarser.",
    };
  const [, , detail, parent] = result.tables;
  return { status: "ok", published: { detail, parent }, linkedTo: previous.id, note: null };
}

// ── grouping rule ────────────────────────────────────────────────────────────────────────────────

/** Share of a table's cells that are hidden (0 for an empty table). */
export function hiddenShare(t: { cells: (number | null)[][] }): number {
  const all = t.cells.flat();
  return all.length === 0 ? 0 : all.filter((v) => v === null).length / all.length;
}

export interface GroupingCandidate<T> {
  key: string;
  table: T;
  /** Share of cells the protection hides. */
  share: number;
}

/**
 * The finest grouping whose protection hides at most `maxShare` of its cells; when none does, the one
 * that hides the least (the coarser one on a tie). Candidates are ordered fine to coarse. Returns the
 * chosen candidate and, when it is not the finest, why.
 */
export function chooseGrouping<T>(
  candidates: GroupingCandidate<T>[],
  maxShare: number,
): { chosen: GroupingCandidate<T>; fellBack: boolean; withinShare: boolean } {
  if (candidates.length === 0) throw new RangeError("no grouping to choose from");
  const within = candidates.find((c) => c.share <= maxShare);
  if (within) return { chosen: within, fellBack: within !== candidates[0], withinShare: true };
  const least = candidates.reduce((best, c) => (c.share <= best.share ? c : best));
  return { chosen: least, fellBack: least !== candidates[0], withinShare: false };
}

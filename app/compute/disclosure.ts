// Statistical disclosure control for managers' readiness tables (docs/consent-and-disclosure.md).
//
// Primary suppression hides every count of 1 … threshold−1 (cells and totals; zeros show).
// Complementary suppression then hides further numbers until the informed reader — who knows the
// threshold, that zeros show (so every hidden number is ≥ 1) and every published number at once —
// can neither recover a hidden number exactly nor prove a hidden small count is below the threshold
// (Hundepool et al. 2012, Statistical Disclosure Control, Wiley, ch. 7 — from memory). The attacker LP
// (javascript-lp-solver) checks this before a table is returned (disclosure/attacker.ts). Several
// tables published to one reader, also over time: disclosure/linked.ts. Threshold: default 5, a
// smaller value is raised to 5 (common practice in health statistics; no single published source).

import { attackerBounds } from "./disclosure/attacker";
import { protectByCycles, suppressionCost } from "./disclosure/cycle-heuristic";
import { auditUntilSafe, dropUnneeded, protectAlgebraically } from "./disclosure/protection-lp";
import {
  type EntryKind,
  flatTableSystem,
  linkedTableSystem,
  type TableSystem,
  validateCounts,
} from "./disclosure/table-system";
import { effectiveThreshold, isSmallCount } from "./disclosure/threshold";

export { REQUIRED_WIDTH } from "./disclosure/protection-lp";
export { protectMedian, suppressedShare } from "./disclosure/small-groups";
export { effectiveThreshold, MINIMUM_THRESHOLD } from "./disclosure/threshold";

/** Tables up to this many numbers (cells and totals, 9 × 9) get the re-publishing pass. */
const DROP_UNNEEDED_MAX_ENTRIES = 100;

export interface ProtectedTable {
  rows: string[];
  columns: string[];
  cells: (number | null)[][];
  rowTotals: (number | null)[];
  columnTotals: (number | null)[];
  grandTotal: number | null;
  threshold: number;
}

/** What an attacker can prove about one hidden number from everything published with it. */
export interface SuppressedInterval {
  kind: EntryKind;
  /** "parent" only for the site table of linked views. */
  table: "detail" | "parent";
  row: number | null;
  column: number | null;
  /** The true count (from the original counts). */
  value: number;
  min: number;
  /** Infinity when nothing published caps it. */
  max: number;
}

export function protectTable(
  rows: string[],
  columns: string[],
  counts: number[][],
  options?: { threshold?: number },
): ProtectedTable {
  validateCounts(rows, columns, counts);
  const threshold = effectiveThreshold(options?.threshold);
  const m = rows.length;
  const n = columns.length;
  const system = flatTableSystem(counts, n);
  const grand = system.entries[m * (n + 1) + n].value;
  const primary = system.entries.map((entry) => isSmallCount(entry.value, threshold));
  // Fast graph heuristic first; the LP audit then confirms (and would repair) the pattern.
  const pattern = protectByCycles(system, m, n, primary);
  const cost = (e: number) => suppressionCost(system, e, grand);
  const safe = auditUntilSafe(system, pattern, cost, threshold);
  // Re-publishing pays off on small tables (3 % fewer hidden cells on 2×2 … 8×6) and costs one audit
  // per try, so it is skipped for large ones, where it found nothing to drop in the benches.
  const suppressed =
    system.entries.length <= DROP_UNNEEDED_MAX_ENTRIES ? dropUnneeded(system, safe, primary, cost, threshold) : safe;
  return flatResult(rows, columns, system, suppressed, threshold);
}

/** Per hidden number of a protected flat table, the interval consistent with what it publishes. */
export function auditProtectedTable(counts: number[][], table: ProtectedTable): SuppressedInterval[] {
  validateCounts(table.rows, table.columns, counts);
  const system = flatTableSystem(counts, table.columns.length);
  const hidden = flatPublished(table);
  hidden.forEach((h, e) => {
    if (!h && flatShown(table, e) !== system.entries[e].value)
      throw new RangeError("published number differs from the counts");
  });
  return intervals(system, hidden);
}

/** Input of linked views: department × stage counts and the site each department belongs to. */
export interface LinkedTablesInput {
  detail: { rows: string[]; columns: string[]; counts: number[][] };
  /** Parent group (e.g. site) of each detail row, same order as detail.rows. */
  parentOf: string[];
  threshold?: number;
}

export interface ProtectedLinkedTables {
  /** Department × stage. */
  detail: ProtectedTable;
  /** Site × stage; rows in order of first appearance in parentOf; same column and grand totals. */
  parent: ProtectedTable;
  threshold: number;
}

/**
 * Protects a department table and the site table that aggregates it as one system, so that a site
 * number minus its other departments (differencing) cannot reveal a small department count.
 */
export function protectLinkedTables(input: LinkedTablesInput): ProtectedLinkedTables {
  const { rows, columns, counts } = input.detail;
  validateCounts(rows, columns, counts);
  if (input.parentOf.length !== rows.length) {
    throw new RangeError(`parentOf has ${input.parentOf.length} entries but there are ${rows.length} detail rows`);
  }
  const threshold = effectiveThreshold(input.threshold);
  const parents = [...new Set(input.parentOf)];
  const parentOfRow = input.parentOf.map((p) => parents.indexOf(p));
  const { system, layout } = linkedTableSystem(counts, columns.length, parentOfRow, parents.length);
  const grand = system.entries[layout.columnTotalIndex[columns.length]].value;
  const cost = (e: number) => suppressionCost(system, e, grand);
  const primary = system.entries.map((entry) => isSmallCount(entry.value, threshold));
  const pattern = protectAlgebraically(system, primary, cost);
  const suppressed = auditUntilSafe(system, pattern, cost, threshold);
  const show = (e: number) => (suppressed[e] ? null : system.entries[e].value);
  const totals = layout.columnTotalIndex.slice(0, columns.length).map(show);
  const grandTotal = show(layout.columnTotalIndex[columns.length]);
  const table = (labels: string[], index: number[][]): ProtectedTable => ({
    rows: [...labels],
    columns: [...columns],
    cells: index.map((line) => line.slice(0, columns.length).map(show)),
    rowTotals: index.map((line) => show(line[columns.length])),
    columnTotals: [...totals],
    grandTotal,
    threshold,
  });
  return { detail: table(rows, layout.detailIndex), parent: table(parents, layout.parentIndex), threshold };
}

/** Per hidden number of linked views published together, the interval consistent with both tables. */
export function auditLinkedTables(
  input: Omit<LinkedTablesInput, "threshold">,
  published: ProtectedLinkedTables,
): SuppressedInterval[] {
  const { rows, columns, counts } = input.detail;
  validateCounts(rows, columns, counts);
  const parents = [...new Set(input.parentOf)];
  const parentOfRow = input.parentOf.map((p) => parents.indexOf(p));
  const { system, layout } = linkedTableSystem(counts, columns.length, parentOfRow, parents.length);
  const mask = new Array<boolean | undefined>(system.entries.length);
  const mark = (e: number, shown: number | null) => {
    const hidden = shown === null;
    if (!hidden && shown !== system.entries[e].value) throw new RangeError("published number differs from the counts");
    if (mask[e] !== undefined && mask[e] !== hidden) throw new RangeError("the two tables disagree on a shared total");
    mask[e] = hidden;
  };
  const n = columns.length;
  for (const [index, tab] of [
    [layout.detailIndex, published.detail],
    [layout.parentIndex, published.parent],
  ] as const) {
    index.forEach((line, r) => {
      line.slice(0, n).forEach((e, j) => {
        mark(e, tab.cells[r][j]);
      });
      mark(line[n], tab.rowTotals[r]);
    });
    layout.columnTotalIndex.slice(0, n).forEach((e, j) => {
      mark(e, tab.columnTotals[j]);
    });
    mark(layout.columnTotalIndex[n], tab.grandTotal);
  }
  return intervals(
    system,
    mask.map((hidden) => hidden === true),
  );
}

function flatPublished(table: ProtectedTable): boolean[] {
  const hidden: boolean[] = [];
  table.cells.forEach((line, i) => {
    line.forEach((v) => {
      hidden.push(v === null);
    });
    hidden.push(table.rowTotals[i] === null);
  });
  table.columnTotals.forEach((v) => {
    hidden.push(v === null);
  });
  hidden.push(table.grandTotal === null);
  return hidden;
}

/** The published value at flat-grid position e (same layout as flatTableSystem). */
function flatShown(table: ProtectedTable, e: number): number | null {
  const n = table.columns.length;
  const m = table.rows.length;
  const i = Math.floor(e / (n + 1));
  const j = e % (n + 1);
  if (i < m) return j < n ? table.cells[i][j] : table.rowTotals[i];
  return j < n ? table.columnTotals[j] : table.grandTotal;
}

function intervals(system: TableSystem, hidden: boolean[]): SuppressedInterval[] {
  return attackerBounds(system, hidden).map(({ entry, min, max }) => {
    const { kind, table, row, column, value } = system.entries[entry];
    return { kind, table, row, column, value, min, max };
  });
}

function flatResult(
  rows: string[],
  columns: string[],
  system: TableSystem,
  suppressed: boolean[],
  threshold: number,
): ProtectedTable {
  const m = rows.length;
  const n = columns.length;
  const show = (i: number, j: number) => (suppressed[i * (n + 1) + j] ? null : system.entries[i * (n + 1) + j].value);
  return {
    rows: [...rows],
    columns: [...columns],
    cells: rows.map((_, i) => columns.map((_, j) => show(i, j))),
    rowTotals: rows.map((_, i) => show(i, n)),
    columnTotals: columns.map((_, j) => show(m, j)),
    grandTotal: show(m, n),
    threshold,
  };
}

export {
  auditLinked,
  type LinkedInterval,
  type LinkedTable,
  type ProtectedLinked,
  type PublishedCounts,
  protectLinked,
  type TableLink,
} from "./disclosure/linked";

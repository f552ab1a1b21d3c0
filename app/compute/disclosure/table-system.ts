// A published table seen as numbers tied together by additivity: every total is the sum of its parts.
// An attacker who sees some numbers and knows these relations can bound the hidden ones
// (Hundepool et al. 2012, Statistical Disclosure Control, Wiley, ch. 7 — from memory).
import { sum } from "simple-statistics";

export type EntryKind = "cell" | "rowTotal" | "columnTotal" | "grandTotal";

/** One number that a table would publish: an inner cell or one of the totals. */
export interface TableEntry {
  kind: EntryKind;
  /** Which published table it belongs to ("detail" or "parent" for linked views; flat tables use "detail"). */
  table: "detail" | "parent";
  /** Row index within its table (null for column totals and the grand total). */
  row: number | null;
  /** Column index (null for row totals and the grand total). */
  column: number | null;
  value: number;
}

/** Σ coefficient · entry = 0, e.g. cells of a row minus the row total. */
export interface Additivity {
  entries: number[];
  coefficients: number[];
}

export interface TableSystem {
  entries: TableEntry[];
  relations: Additivity[];
}

/** Checks the counts are a rectangular grid of whole, non-negative numbers matching the labels. */
export function validateCounts(rows: string[], columns: string[], counts: number[][]): void {
  if (counts.length !== rows.length) {
    throw new RangeError(`counts has ${counts.length} rows but ${rows.length} row labels`);
  }
  counts.forEach((line, i) => {
    if (line.length !== columns.length) {
      throw new RangeError(`counts row ${i} has ${line.length} values but ${columns.length} column labels`);
    }
    line.forEach((value, j) => {
      if (!Number.isInteger(value) || value < 0) {
        throw new RangeError(`count at row ${i}, column ${j} must be a whole number ≥ 0, got ${value}`);
      }
    });
  });
}

/**
 * Flat two-way table with margins, laid out as an (m+1) × (n+1) grid: entry i·(n+1)+j is cell (i, j)
 * for i < m, j < n; column n holds the row totals, row m the column totals, (m, n) the grand total.
 */
export function flatTableSystem(counts: number[][], columnCount: number): TableSystem {
  const m = counts.length;
  const n = columnCount;
  const width = n + 1;
  const entries: TableEntry[] = [];
  const rowTotals = counts.map((line) => line.reduce((a, b) => a + b, 0));
  const columnTotals = Array.from({ length: n }, (_, j) => counts.reduce((a, line) => a + line[j], 0));
  const grand = rowTotals.reduce((a, b) => a + b, 0);
  for (let i = 0; i <= m; i++) {
    for (let j = 0; j <= n; j++) {
      if (i < m && j < n) entries.push({ kind: "cell", table: "detail", row: i, column: j, value: counts[i][j] });
      else if (i < m) entries.push({ kind: "rowTotal", table: "detail", row: i, column: null, value: rowTotals[i] });
      else if (j < n)
        entries.push({ kind: "columnTotal", table: "detail", row: null, column: j, value: columnTotals[j] });
      else entries.push({ kind: "grandTotal", table: "detail", row: null, column: null, value: grand });
    }
  }
  const relations: Additivity[] = [];
  // Every line of the extended grid: its inner entries add up to its last entry.
  for (let i = 0; i <= m; i++) {
    const idx = Array.from({ length: n + 1 }, (_, j) => i * width + j);
    relations.push({ entries: idx, coefficients: idx.map((_, j) => (j < n ? 1 : -1)) });
  }
  for (let j = 0; j <= n; j++) {
    const idx = Array.from({ length: m + 1 }, (_, i) => i * width + j);
    relations.push({ entries: idx, coefficients: idx.map((_, i) => (i < m ? 1 : -1)) });
  }
  return { entries, relations };
}

/** Index layout of two linked tables: department × stage and site × stage sharing column totals. */
export interface LinkedLayout {
  /** detailIndex[d][j], j = n for the department's row total. */
  detailIndex: number[][];
  /** parentIndex[p][j], j = n for the site's row total. */
  parentIndex: number[][];
  /** columnTotalIndex[j], j = n for the grand total; shared by both tables. */
  columnTotalIndex: number[];
}

/**
 * Department rows nested in site rows (a one-level hierarchy on rows, flat columns). Site cells are
 * sums of their departments' cells; both tables publish the same column totals and grand total.
 */
export function linkedTableSystem(
  counts: number[][],
  columnCount: number,
  parentOfRow: number[],
  parentCount: number,
): { system: TableSystem; layout: LinkedLayout } {
  const n = columnCount;
  const entries: TableEntry[] = [];
  const add = (entry: TableEntry) => entries.push(entry) - 1;

  const detailIndex = counts.map((line, d) => [
    ...line.map((value, j) => add({ kind: "cell", table: "detail", row: d, column: j, value })),
    add({ kind: "rowTotal", table: "detail", row: d, column: null, value: sum(line) }),
  ]);
  const parentValues = Array.from({ length: parentCount }, (_, p) =>
    Array.from({ length: n }, (_, j) => sum(counts.filter((_, d) => parentOfRow[d] === p).map((line) => line[j]))),
  );
  const parentIndex = parentValues.map((line, p) => [
    ...line.map((value, j) => add({ kind: "cell", table: "parent", row: p, column: j, value })),
    add({ kind: "rowTotal", table: "parent", row: p, column: null, value: sum(line) }),
  ]);
  const columnValues = Array.from({ length: n }, (_, j) => sum(counts.map((line) => line[j])));
  const columnTotalIndex = [
    ...columnValues.map((value, j) => add({ kind: "columnTotal", table: "detail", row: null, column: j, value })),
    add({ kind: "grandTotal", table: "detail", row: null, column: null, value: sum(columnValues) }),
  ];

  const relations: Additivity[] = [];
  const relation = (parts: number[], whole: number) =>
    relations.push({ entries: [...parts, whole], coefficients: [...parts.map(() => 1), -1] });
  for (const line of [...detailIndex, ...parentIndex, columnTotalIndex]) relation(line.slice(0, n), line[n]);
  for (let p = 0; p < parentCount; p++) {
    const members = detailIndex.filter((_, d) => parentOfRow[d] === p);
    for (let j = 0; j <= n; j++)
      relation(
        members.map((line) => line[j]),
        parentIndex[p][j],
      );
  }
  for (let j = 0; j <= n; j++)
    relation(
      parentIndex.map((line) => line[j]),
      columnTotalIndex[j],
    );
  return { system: { entries, relations }, layout: { detailIndex, parentIndex, columnTotalIndex } };
}

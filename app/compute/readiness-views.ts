// Pure helpers for the managers' readiness views (docs/consent-and-disclosure.md). Everything here works only on tables
// that have already been through disclosure control, so whatever it derives is computable from the
// published numbers alone and reveals nothing more than they do.

import { addWeeks, isIsoDate, weekStart as isoWeekStart } from "../dates/calendar";
import type { ProtectedTable } from "./disclosure";

/** The symbol a hidden (suppressed) number reads as, on screen and in exports. */
export const HIDDEN_SYMBOL = "▒";

/**
 * Cumulative sums down the rows (e.g. weeks) of a protected table, per column and for the row totals.
 * A running total up to row w is given only when it follows exactly from published numbers: every
 * cell up to w is shown, or the column total and every cell after w are shown (total minus the rest).
 * Otherwise it is null (a gap in the chart), never an estimate.
 */
export function cumulativeFromProtected(table: ProtectedTable): {
  columns: (number | null)[][];
  total: (number | null)[];
} {
  const m = table.rows.length;
  const series = (values: (number | null)[], total: number | null): (number | null)[] => {
    const out: (number | null)[] = [];
    for (let w = 0; w < m; w++) {
      const head = values.slice(0, w + 1);
      const tail = values.slice(w + 1);
      if (head.every((v) => v !== null)) out.push((head as number[]).reduce((a, b) => a + b, 0));
      else if (total !== null && tail.every((v) => v !== null))
        out.push(total - (tail as number[]).reduce((a, b) => a + b, 0));
      else out.push(null);
    }
    return out;
  };
  const columns = table.columns.map((_, j) =>
    series(
      table.cells.map((line) => line[j]),
      table.columnTotals[j],
    ),
  );
  const direct = series(table.rowTotals, table.grandTotal);
  // Where the row totals leave a gap but every column's running total is known, their sum is known too.
  const total = direct.map((v, w) => {
    if (v !== null) return v;
    const parts = columns.map((c) => c[w]);
    return parts.length > 0 && parts.every((p) => p !== null) ? (parts as number[]).reduce((a, b) => a + b, 0) : null;
  });
  return { columns, total };
}

/** The same published numbers with rows and columns swapped (protection is unchanged by transposing). */
export function transposeProtected(table: ProtectedTable): ProtectedTable {
  return {
    rows: [...table.columns],
    columns: [...table.rows],
    cells: table.columns.map((_, j) => table.rows.map((_, i) => table.cells[i][j])),
    rowTotals: [...table.columnTotals],
    columnTotals: [...table.rowTotals],
    grandTotal: table.grandTotal,
    threshold: table.threshold,
  };
}

/** Monday of the ISO week containing a YYYY-MM-DD date (or the day of a wall-clock time), as YYYY-MM-DD. */
export function weekStart(day: string): string {
  const d = day.slice(0, 10);
  if (!isIsoDate(d)) throw new RangeError(`not a date: ${day}`);
  return isoWeekStart(d);
}

/** Every week start from `first` to `last` inclusive (both Mondays), so empty weeks show as zero. */
export function weekRange(first: string, last: string): string[] {
  const out: string[] = [];
  const end = weekStart(last);
  for (let d = weekStart(first); d <= end; d = addWeeks(d, 1)) out.push(d);
  return out;
}

// ── one organisation-wide publication, sliced per viewer ─────────────────────────────────────────
//
// Counts are protected ONCE for the whole organisation (every department, linked to its site), and
// each viewer (a manager's departments, a whole site, an API key's sites) sees a slice of that one
// publication. A sum is shown to a viewer only when it follows from published numbers. So no two
// viewers' pages together, and no page together with the API, reveal more than the single protected
// publication does: nothing can be differenced out across scopes.

export interface OrgLayout {
  /** Every department of the organisation: its label and the key of its site. */
  departments: { label: string; siteKey: string }[];
  /** Every site, in the order of first appearance in departments. */
  sites: { key: string; label: string }[];
}

export interface Viewer {
  /** Indices into OrgLayout.departments that the viewer may see. */
  departments: number[];
  /** Site keys the viewer holds as a whole. */
  wholeSites: string[];
  /** Organisation-wide scope: organisation totals may show. */
  allSites: boolean;
}

export interface OrgPublication {
  detail: ProtectedTable;
  parent: ProtectedTable;
  threshold: number;
}

/** Sum of published numbers, or null when any of them is hidden (an unknown sum is never shown). */
export function derivedSum(values: (number | null)[]): number | null {
  let s = 0;
  for (const v of values) {
    if (v === null) return null;
    s += v;
  }
  return s;
}

/**
 * Per column (and for the row totals): the published number for the viewer's whole groups — the site
 * row for a whole site, the department row otherwise — so a whole site's total is its published site
 * number rather than a sum that a single hidden department would hide.
 */
function viewerTotals(
  org: OrgLayout,
  pub: OrgPublication,
  viewer: Viewer,
): { columns: (number | null)[]; grand: number | null } {
  const n = pub.detail.columns.length;
  if (viewer.allSites) return { columns: [...pub.detail.columnTotals], grand: pub.detail.grandTotal };
  const whole = new Set(viewer.wholeSites);
  const siteRows = pub.parent.rows.map((_, s) => s).filter((s) => whole.has(org.sites[s].key));
  const deptRows = viewer.departments.filter((i) => !whole.has(org.departments[i].siteKey));
  const columns = Array.from({ length: n }, (_, j) =>
    derivedSum([...siteRows.map((s) => pub.parent.cells[s][j]), ...deptRows.map((i) => pub.detail.cells[i][j])]),
  );
  const grand = derivedSum([
    ...siteRows.map((s) => pub.parent.rowTotals[s]),
    ...deptRows.map((i) => pub.detail.rowTotals[i]),
  ]);
  return { columns, grand };
}

/** The viewer's department rows of the organisation-wide publication, with totals only where they follow. */
export function departmentSlice(org: OrgLayout, pub: OrgPublication, viewer: Viewer): ProtectedTable {
  const t = viewerTotals(org, pub, viewer);
  return {
    rows: viewer.departments.map((i) => pub.detail.rows[i]),
    columns: [...pub.detail.columns],
    cells: viewer.departments.map((i) => [...pub.detail.cells[i]]),
    rowTotals: viewer.departments.map((i) => pub.detail.rowTotals[i]),
    columnTotals: t.columns,
    grandTotal: t.grand,
    threshold: pub.threshold,
  };
}

/**
 * The viewer's site rows: a whole site is its published site row; a site of which the viewer holds
 * only some departments is labelled as such and is the sum of those departments where that follows.
 */
export function siteSlice(org: OrgLayout, pub: OrgPublication, viewer: Viewer): ProtectedTable {
  const whole = new Set(viewer.wholeSites);
  const n = pub.detail.columns.length;
  const rows: string[] = [];
  const cells: (number | null)[][] = [];
  const rowTotals: (number | null)[] = [];
  org.sites.forEach((site, s) => {
    const mine = viewer.departments.filter((i) => org.departments[i].siteKey === site.key);
    if (viewer.allSites || whole.has(site.key)) {
      rows.push(site.label);
      cells.push([...pub.parent.cells[s]]);
      rowTotals.push(pub.parent.rowTotals[s]);
    } else if (mine.length > 0) {
      rows.push(`${site.label} (your departments)`);
      cells.push(Array.from({ length: n }, (_, j) => derivedSum(mine.map((i) => pub.detail.cells[i][j]))));
      rowTotals.push(derivedSum(mine.map((i) => pub.detail.rowTotals[i])));
    }
  });
  const t = viewerTotals(org, pub, viewer);
  return {
    rows,
    columns: [...pub.detail.columns],
    cells,
    rowTotals,
    columnTotals: t.columns,
    grandTotal: t.grand,
    threshold: pub.threshold,
  };
}

/**
 * Columns of a protected table (e.g. weeks × every department) that a viewer may see, with row totals
 * and grand total only where they follow from the shown columns.
 */
export function columnSlice(table: ProtectedTable, columns: number[]): ProtectedTable {
  const cells = table.cells.map((line) => columns.map((j) => line[j]));
  const all = columns.length === table.columns.length && columns.every((j, k) => j === k);
  return {
    rows: [...table.rows],
    columns: columns.map((j) => table.columns[j]),
    cells,
    rowTotals: all ? [...table.rowTotals] : cells.map((line) => derivedSum(line)),
    columnTotals: columns.map((j) => table.columnTotals[j]),
    grandTotal: all ? table.grandTotal : derivedSum(columns.map((j) => table.columnTotals[j])),
    threshold: table.threshold,
  };
}

/**
 * Joins consecutive weeks into periods so that weekly counts of a few people do not have to be hidden
 * one by one: a period grows week by week until every one of its cells is 0 or at least `threshold`,
 * or it spans `maxWeeks` weeks. A short last period that still has small cells joins the one before
 * when that keeps within maxWeeks. Periods are fixed by the whole table (every department), so every
 * viewer sees the same periods. Disclosure control still runs on the result.
 */
export function mergeWeeks(
  weeks: string[],
  counts: number[][],
  threshold: number,
  maxWeeks = 4,
): { periods: { first: string; last: string; weeks: number }[]; counts: number[][] } {
  const periods: { first: string; last: string; weeks: number }[] = [];
  const merged: number[][] = [];
  const small = (line: number[]) => line.some((v) => v > 0 && v < threshold);
  let start = 0;
  while (start < weeks.length) {
    let end = start;
    let line = [...counts[start]];
    while (small(line) && end + 1 < weeks.length && end - start + 1 < maxWeeks) {
      end++;
      line = line.map((v, j) => v + counts[end][j]);
    }
    periods.push({ first: weeks[start], last: weeks[end], weeks: end - start + 1 });
    merged.push(line);
    start = end + 1;
  }
  const k = periods.length - 1;
  if (k > 0 && small(merged[k]) && periods[k - 1].weeks + periods[k].weeks <= maxWeeks) {
    merged[k - 1] = merged[k - 1].map((v, j) => v + merged[k][j]);
    periods[k - 1] = {
      first: periods[k - 1].first,
      last: periods[k].last,
      weeks: periods[k - 1].weeks + periods[k].weeks,
    };
    periods.pop();
    merged.pop();
  }
  return { periods, counts: merged };
}

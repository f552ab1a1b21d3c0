import { describe, expect, it } from "vitest";
import { auditLinkedTables, type ProtectedTable, protectLinkedTables } from "../../app/compute/disclosure";
import {
  columnSlice,
  cumulativeFromProtected,
  departmentSlice,
  derivedSum,
  mergeWeeks,
  type OrgLayout,
  siteSlice,
  transposeProtected,
  weekRange,
  weekStart,
} from "../../app/compute/readiness-views";

const table = (
  cells: (number | null)[][],
  rowTotals: (number | null)[],
  columnTotals: (number | null)[],
  grandTotal: number | null,
): ProtectedTable => ({
  rows: cells.map((_, i) => `r${i}`),
  columns: cells[0].map((_, j) => `c${j}`),
  cells,
  rowTotals,
  columnTotals,
  grandTotal,
  threshold: 5,
});

describe("cumulativeFromProtected (running totals only where they follow from published numbers)", () => {
  it("adds a fully published column week by week (hand sums)", () => {
    const t = table(
      [
        [5, 0],
        [0, 7],
        [6, 5],
      ],
      [5, 7, 11],
      [11, 12],
      23,
    );
    const c = cumulativeFromProtected(t);
    expect(c.columns[0]).toEqual([5, 5, 11]);
    expect(c.columns[1]).toEqual([0, 7, 12]);
    expect(c.total).toEqual([5, 12, 23]);
  });

  it("uses total minus the later weeks, and leaves a gap where neither side is known", () => {
    // column 0: hidden in week 0 and week 1 → week 0 and 1 running totals unknown from the head;
    // from the tail: C(1) = 20 − 9 = 11; C(0) needs week 1 too → gap.
    const t = table(
      [
        [null, 5],
        [null, 6],
        [9, 0],
      ],
      [null, null, 9],
      [20, 11],
      31,
    );
    const c = cumulativeFromProtected(t);
    expect(c.columns[0]).toEqual([null, 11, 20]);
    expect(c.columns[1]).toEqual([5, 11, 11]);
    // Row totals hidden in weeks 0–1: the grand total minus week 2 gives C(1) = 22; C(0) has no way.
    expect(c.total).toEqual([null, 22, 31]);
  });

  it("never shows a running total that would give back a hidden cell", () => {
    const t = table(
      [
        [null, 8],
        [null, 9],
      ],
      [null, null],
      [null, 17],
      null,
    );
    const c = cumulativeFromProtected(t);
    expect(c.columns[0]).toEqual([null, null]);
    expect(c.total).toEqual([null, null]);
  });
});

describe("small helpers", () => {
  it("derivedSum is null as soon as one part is hidden", () => {
    expect(derivedSum([1, 2, 3])).toBe(6);
    expect(derivedSum([1, null, 3])).toBeNull();
    expect(derivedSum([])).toBe(0);
  });

  it("transposeProtected swaps rows and columns with their totals", () => {
    const t = table(
      [
        [1, 2, 3],
        [4, 5, 6],
      ],
      [6, 15],
      [5, 7, 9],
      21,
    );
    const u = transposeProtected(t);
    expect(u.cells).toEqual([
      [1, 4],
      [2, 5],
      [3, 6],
    ]);
    expect(u.rowTotals).toEqual([5, 7, 9]);
    expect(u.columnTotals).toEqual([6, 15]);
    expect(transposeProtected(u)).toEqual(t);
  });

  it("weekStart gives the Monday of the ISO week (ISO 8601 weeks start on Monday)", () => {
    // Calendar facts: 7 Dec 2026 is a Monday; 1 Jan 2027 is a Friday; 3 Jan 2027 is a Sunday.
    expect(weekStart("2026-12-07")).toBe("2026-12-07");
    expect(weekStart("2027-01-01")).toBe("2026-12-28");
    expect(weekStart("2027-01-03T23:00:00.000Z")).toBe("2026-12-28");
    expect(weekRange("2026-12-09", "2027-01-04")).toEqual([
      "2026-12-07",
      "2026-12-14",
      "2026-12-21",
      "2026-12-28",
      "2027-01-04",
    ]);
    expect(() => weekStart("not a day")).toThrow(RangeError);
  });

  it("mergeWeeks joins weeks until no cell holds 1–4 people, at most four weeks", () => {
    const weeks = ["w1", "w2", "w3", "w4", "w5", "w6"];
    const counts = [
      [2, 0],
      [3, 5],
      [0, 0],
      [6, 0],
      [1, 1],
      [1, 1],
    ];
    const m = mergeWeeks(weeks, counts, 5);
    // w1+w2 = [5, 5] fine; w3 = [0, 0] fine; w4 = [6, 0] fine; w5+w6 = [2, 2] still small, joined with nothing
    // (w4 + w5 + w6 would be 3 weeks ≤ 4, so the short last period joins w4: [8, 2]).
    expect(m.periods.map((p) => `${p.first}-${p.last}`)).toEqual(["w1-w2", "w3-w3", "w4-w6"]);
    expect(m.counts).toEqual([
      [5, 5],
      [0, 0],
      [8, 2],
    ]);
    expect(m.counts.flat().reduce((a, b) => a + b, 0)).toBe(counts.flat().reduce((a, b) => a + b, 0));
    const capped = mergeWeeks(["a", "b", "c", "d", "e"], [[1], [1], [1], [1], [9]], 5);
    expect(capped.periods[0].weeks).toBe(4);
    expect(capped.counts).toEqual([[4], [9]]);
  });
});

describe("one organisation-wide publication, sliced per viewer", () => {
  // Hand-made organisation: site A with three departments, site B with two; columns = stages.
  const org: OrgLayout = {
    departments: [
      { label: "A1", siteKey: "A" },
      { label: "A2", siteKey: "A" },
      { label: "A3", siteKey: "A" },
      { label: "B1", siteKey: "B" },
      { label: "B2", siteKey: "B" },
    ],
    sites: [
      { key: "A", label: "Site A" },
      { key: "B", label: "Site B" },
    ],
  };
  const counts = [
    [12, 3, 9],
    [8, 10, 6],
    [7, 6, 11],
    [2, 15, 8],
    [9, 9, 9],
  ];
  const pub = protectLinkedTables({
    detail: { rows: org.departments.map((d) => d.label), columns: ["x", "y", "z"], counts },
    parentOf: ["A", "A", "A", "B", "B"],
  });

  it("a whole-site viewer's department and site tables pass the linked LP audit (no exact recovery)", () => {
    const viewer = { departments: [0, 1, 2], wholeSites: ["A"], allSites: false };
    const dept = departmentSlice(org, pub, viewer);
    const site = siteSlice(org, pub, viewer);
    expect(site.rows).toEqual(["Site A"]);
    expect(dept.cells[0][1]).toBeNull(); // the 3
    const intervals = auditLinkedTables(
      { detail: { rows: dept.rows, columns: dept.columns, counts: counts.slice(0, 3) }, parentOf: ["A", "A", "A"] },
      { detail: dept, parent: site, threshold: 5 },
    );
    expect(intervals.length).toBeGreaterThanOrEqual(2);
    for (const iv of intervals) expect(iv.max - iv.min).toBeGreaterThanOrEqual(1);
  });

  it("a department viewer sees the same numbers for their rows, and only sums that follow", () => {
    const whole = departmentSlice(org, pub, { departments: [0, 1, 2], wholeSites: ["A"], allSites: false });
    const part = departmentSlice(org, pub, { departments: [0, 1], wholeSites: [], allSites: false });
    expect(part.cells).toEqual(whole.cells.slice(0, 2));
    expect(part.rowTotals).toEqual(whole.rowTotals.slice(0, 2));
    // Column sums over A1 + A2 are shown only where both cells are shown.
    part.columnTotals.forEach((v, j) => {
      const a = part.cells[0][j];
      const b = part.cells[1][j];
      expect(v).toBe(a === null || b === null ? null : a + b);
    });
    const partSite = siteSlice(org, pub, { departments: [0, 1], wholeSites: [], allSites: false });
    expect(partSite.rows).toEqual(["Site A (your departments)"]);
  });

  it("columnSlice keeps published column totals and recomputes row sums only from shown cells", () => {
    const t = table(
      [
        [5, null, null],
        [0, 6, 7],
      ],
      [null, 13],
      [5, null, null],
      null,
    );
    const s = columnSlice(t, [0, 1]);
    expect(s.cells).toEqual([
      [5, null],
      [0, 6],
    ]);
    expect(s.rowTotals).toEqual([null, 6]);
    expect(s.columnTotals).toEqual([5, null]);
    expect(s.grandTotal).toBeNull();
    expect(columnSlice(t, [0, 1, 2])).toEqual(t);
  });
});

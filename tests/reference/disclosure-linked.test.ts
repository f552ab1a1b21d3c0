// Tables published to the same reader and protected together (app/compute/disclosure/linked.ts):
// two weeks of one table, and a department table with the site table that sums it. The reader is the
// informed one (hidden ≥ 1, every published number known, and for two weeks a bound on how much the
// counts changed). Reference: every audit is repeated by HiGHS (npm `highs`) from the published
// numbers alone, in a formulation written separately (tests/reference/disclosure-audit.ts); the
// scenarios' key numbers are worked out by hand in the comments.

import { describe, expect, it } from "vitest";
import { auditLinked, type LinkedInterval, protectLinked, protectTable } from "~/compute/disclosure";
import { highsLinkedBounds, highsTwoTimesBounds } from "./disclosure-audit";

const departments = ["Kitting", "Paint Prep", "Inspection", "Final Assembly"];
const stages = ["baselined", "planned", "training", "proficient"];
// Week 1, and week 2 in which ONE Kitting worker moved from "baselined" to "planned".
const week1 = [
  [11, 3, 17, 2],
  [7, 9, 4, 1],
  [12, 5, 6, 0],
  [0, 0, 14, 24],
];
const week2 = week1.map((line) => [...line]);
week2[0][0] -= 1;
week2[0][1] += 1;
const oneMover = { kind: "change" as const, before: 0, after: 1, maxCellChange: 2 };

const wholeValues = (min: number, max: number) =>
  max === Infinity ? Infinity : Math.floor(max + 1e-6) - Math.ceil(min - 1e-6) + 1;

/** True count behind a HiGHS name of the two-week audit ("bc_i_j", "ar_i", "ak_j", "ag", "dc_i_j"). */
function truth(name: string): number {
  const [head, ...idx] = name.split("_");
  const counts = head[0] === "b" ? week1 : week2;
  const at = idx.map(Number);
  const kind = head.slice(1);
  if (head === "dc") return week2[at[0]][at[1]] - week1[at[0]][at[1]];
  if (kind === "c") return counts[at[0]][at[1]];
  if (kind === "r") return counts[at[0]].reduce((a, b) => a + b, 0);
  if (kind === "k") return counts.reduce((a, line) => a + line[at[0]], 0);
  return counts.flat().reduce((a, b) => a + b, 0);
}

/** Leaks the informed reader finds: exact counts, provably small counts, provable gains or losses. */
function leaks(bounds: { name: string; min: number; max: number }[], t = 5) {
  return bounds.filter((b) => {
    if (b.name.startsWith("dc_")) return !(b.min <= 1e-6 && b.max >= -1e-6);
    return wholeValues(b.min, b.max) < 2 || (truth(b.name) < t && b.max < t - 1e-6);
  });
}

const productName = (a: LinkedInterval) => {
  if (a.quantity === "change") return `dc_${a.row}_${a.column}`;
  const p = a.table === 0 ? "b" : "a";
  if (a.kind === "cell") return `${p}c_${a.row}_${a.column}`;
  if (a.kind === "rowTotal") return `${p}r_${a.row}`;
  return a.kind === "columnTotal" ? `${p}k_${a.column}` : `${p}g`;
};

describe("two weeks published to one manager, one worker changes stage", () => {
  const published1 = protectTable(departments, stages, week1);

  it("each week protected alone: differencing shows which stage the worker moved to", async () => {
    const published2 = protectTable(departments, stages, week2);
    // Both cells of the destination are hidden in both weeks …
    expect(published1.cells[0][1]).toBeNull();
    expect(published2.cells[0][1]).toBeNull();
    const joint = await highsTwoTimesBounds(published1, published2, 2);
    // … yet the reader can prove Kitting "planned" GAINED someone this week: a reader who knows which
    // worker changed stage learns that worker's new stage.
    const destination = joint.find((b) => b.name === "dc_0_1")!;
    expect(destination.min).toBeGreaterThanOrEqual(1 - 1e-6);
    expect(leaks(joint).length).toBeGreaterThan(0);
  });

  it("week 2 protected against week 1: no leak, and the destination stage is not provable", async () => {
    const result = protectLinked(
      [
        { rows: departments, columns: stages, counts: week1, published: published1 },
        { rows: departments, columns: stages, counts: week2 },
      ],
      [oneMover],
    );
    expect(result.unprotectable).toEqual([]);
    // Week 1 is kept exactly as it was published.
    expect(result.tables[0]).toMatchObject({
      cells: published1.cells,
      rowTotals: published1.rowTotals,
      columnTotals: published1.columnTotals,
      grandTotal: published1.grandTotal,
    });
    const week2Published = result.tables[1];
    week2.forEach((line, i) => {
      line.forEach((v, j) => {
        if (v > 0 && v < 5) expect(week2Published.cells[i][j]).toBeNull();
        if (week2Published.cells[i][j] !== null) expect(week2Published.cells[i][j]).toBe(v);
      });
    });
    const joint = await highsTwoTimesBounds(published1, week2Published, 2);
    expect(leaks(joint)).toEqual([]);
    const destination = joint.find((b) => b.name === "dc_0_1")!;
    expect(destination.min).toBeLessThanOrEqual(1e-6); // "nobody joined Kitting/planned" is consistent
    // The product's audit of the pair agrees with HiGHS on every bound.
    const product = auditLinked(
      [
        { rows: departments, columns: stages, counts: week1, published: published1 },
        { rows: departments, columns: stages, counts: week2, published: week2Published },
      ],
      [oneMover],
    );
    const reference = new Map(joint.map((b) => [b.name, b]));
    expect(product.length).toBe(joint.length);
    for (const a of product) {
      const b = reference.get(productName(a))!;
      expect(b, productName(a)).toBeDefined();
      expect(a.min).toBeCloseTo(b.min, 6);
      if (a.max === Infinity) expect(b.max).toBe(Infinity);
      else expect(a.max).toBeCloseTo(b.max, 6);
    }
  });

  it("a cell shown as 0 last week that now holds 1 person cannot be protected by hiding: it is reported", async () => {
    // A Final Assembly worker moves from "training" to "baselined": that cell goes 0 → 1. With at most
    // 2 cell changes the reader knows it is ≤ 0 + 2 = 2 < 5 whatever is hidden this week (by hand).
    const moved = week1.map((line) => [...line]);
    moved[3][2] -= 1;
    moved[3][0] += 1;
    const result = protectLinked(
      [
        { rows: departments, columns: stages, counts: week1, published: published1 },
        { rows: departments, columns: stages, counts: moved },
      ],
      [oneMover],
    );
    const flagged = result.unprotectable.find((a) => a.table === 1 && a.row === 3 && a.column === 0);
    expect(flagged).toMatchObject({ quantity: "count", value: 1 });
    expect(flagged!.max).toBeLessThanOrEqual(2 + 1e-6);
  });

  it("refuses a change larger than the declared budget", () => {
    const two = week2.map((line) => [...line]);
    two[1][0] -= 1;
    two[1][1] += 1;
    expect(() =>
      protectLinked(
        [
          { rows: departments, columns: stages, counts: week1, published: published1 },
          { rows: departments, columns: stages, counts: two },
        ],
        [oneMover],
      ),
    ).toThrow(/maxCellChange/);
  });
});

describe("a department table and its site table through protectLinked", () => {
  it("no hidden number of either table is recoverable or provably small (HiGHS)", async () => {
    const counts = [
      [2, 10, 10],
      [10, 10, 10],
      [10, 3, 10],
      [10, 10, 10],
    ];
    const parentOf = [0, 0, 1, 1];
    const siteCounts = [
      [12, 20, 20],
      [20, 13, 20],
    ];
    const result = protectLinked(
      [
        { rows: ["Kitting", "Paint Prep", "Inspection", "Final Assembly"], columns: stages.slice(0, 3), counts },
        { rows: ["North Yard", "Riverside"], columns: stages.slice(0, 3), counts: siteCounts },
      ],
      [{ kind: "rollup", detail: 0, parent: 1, parentOf }],
    );
    expect(result.unprotectable).toEqual([]);
    const [detail, site] = result.tables;
    expect(detail.cells[0][0]).toBeNull();
    expect(detail.cells[2][1]).toBeNull();
    const bounds = await highsLinkedBounds(detail, site, parentOf);
    const value = (name: string) => {
      const [head, ...idx] = name.split("_");
      const at = idx.map(Number);
      if (head === "dc") return counts[at[0]][at[1]];
      if (head === "pc") return siteCounts[at[0]][at[1]];
      return 5; // every total here is ≥ 5 (row 22, 30, 23, 30; site 52, 53; column 32, 33, 40)
    };
    for (const b of bounds) {
      expect(wholeValues(b.min, b.max), b.name).toBeGreaterThanOrEqual(2);
      if (value(b.name) < 5) expect(b.max, b.name).toBeGreaterThanOrEqual(5 - 1e-6);
    }
  });
});

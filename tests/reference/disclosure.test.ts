// Disclosure control for managers' readiness tables (docs/consent-and-disclosure.md).
// References: Hundepool et al. (2012) Statistical Disclosure Control, Wiley, ch. 7 (primary and
// secondary cell suppression; auditing a pattern by the attacker LP) — details from memory; the
// threshold of 5 is common practice in health statistics (no single published source); interval
// values in the hand-made tables are worked out by hand in the comments; the random-table audits are
// checked against HiGHS (npm `highs` 1.15.3, reference solver, independent formulation).

import { median as referenceMedian } from "simple-statistics";
import { describe, expect, it } from "vitest";
import {
  auditLinkedTables,
  auditProtectedTable,
  type ProtectedTable,
  protectLinkedTables,
  protectMedian,
  protectTable,
  type SuppressedInterval,
  suppressedShare,
} from "~/compute/disclosure";
import { firstUnsafeEntry } from "~/compute/disclosure/attacker";
import { flatTableSystem } from "~/compute/disclosure/table-system";
import {
  auditNames,
  type HiddenBound,
  highsFlatBounds,
  highsLinkedBounds,
  randomTables,
  seeded,
  smallCountTable,
} from "./disclosure-audit";

const labels = (prefix: string, k: number) => Array.from({ length: k }, (_, i) => `${prefix}${i + 1}`);
const sum = (xs: number[]) => xs.reduce((a, b) => a + b, 0);

/** Publishes only the primary suppressions (what a naive implementation would do). */
function primaryOnly(counts: number[][], t = 5): ProtectedTable {
  const small = (v: number) => (v > 0 && v < t ? null : v);
  const n = counts[0].length;
  const columnTotals = Array.from({ length: n }, (_, j) => sum(counts.map((r) => r[j])));
  return {
    rows: labels("r", counts.length),
    columns: labels("c", n),
    cells: counts.map((r) => r.map(small)),
    rowTotals: counts.map((r) => small(sum(r))),
    columnTotals: columnTotals.map(small),
    grandTotal: small(sum(columnTotals)),
    threshold: t,
  };
}

const hiddenCells = (t: ProtectedTable) =>
  t.cells.flatMap((line, i) => line.flatMap((v, j) => (v === null ? [[i, j]] : [])));

const flatName = (a: SuppressedInterval) =>
  a.kind === "cell"
    ? auditNames.cellName("", a.row!, a.column!)
    : a.kind === "rowTotal"
      ? auditNames.rowTotalName("", a.row!)
      : a.kind === "columnTotal"
        ? auditNames.columnTotalName(a.column!)
        : auditNames.GRAND;

/** True value of a HiGHS-named quantity of a flat table (cell, row/column total or grand total). */
function trueValue(counts: number[][], name: string): number {
  const parts = name.split("_");
  if (parts[0] === "c") return counts[Number(parts[1])][Number(parts[2])];
  if (parts[0] === "r") return sum(counts[Number(parts[1])]);
  if (parts[0] === "k") return sum(counts.map((line) => line[Number(parts[1])]));
  return sum(counts.flat());
}

const linkedName = (a: SuppressedInterval) => {
  const prefix = a.table === "detail" ? "d" : "p";
  if (a.kind === "cell") return auditNames.cellName(prefix, a.row!, a.column!);
  if (a.kind === "rowTotal") return auditNames.rowTotalName(prefix, a.row!);
  return a.kind === "columnTotal" ? auditNames.columnTotalName(a.column!) : auditNames.GRAND;
};

/** The two solvers agree on every bound (both infinite, or equal to 1e-6). */
function expectSameBounds(
  product: SuppressedInterval[],
  reference: HiddenBound[],
  name: (a: SuppressedInterval) => string,
) {
  const byName = new Map(reference.map((b) => [b.name, b]));
  expect(byName.size).toBe(product.length);
  for (const a of product) {
    const b = byName.get(name(a))!;
    expect(b, name(a)).toBeDefined();
    expect(b.min).toBeCloseTo(a.min, 6);
    if (a.max === Infinity) expect(b.max).toBe(Infinity);
    else expect(b.max).toBeCloseTo(a.max, 6);
  }
}

/** Whole numbers in an LP interval (with a little tolerance for solver round-off). */
const wholeValues = (min: number, max: number) =>
  max === Infinity ? Infinity : Math.floor(max + 1e-6) - Math.ceil(min - 1e-6) + 1;

/**
 * Protected against the informed reader: no hidden number is recoverable exactly (its interval holds at
 * least two whole numbers) and no hidden small count is provably small (its maximum reaches t).
 */
function expectProtected(audit: { min: number; max: number; value: number }[], t = 5) {
  for (const a of audit) {
    expect(wholeValues(a.min, a.max), JSON.stringify(a)).toBeGreaterThanOrEqual(2);
    expect(a.min).toBeGreaterThanOrEqual(1 - 1e-6);
    if (a.value < t) expect(a.max, JSON.stringify(a)).toBeGreaterThanOrEqual(t - 1e-6);
  }
}

describe("primary suppression", () => {
  it("hides counts of 1–4, shows zeros and counts ≥ 5, hides small totals", () => {
    // Row totals 3, 4, 31; column totals 14, 15, 9; grand 48 (by hand).
    const counts = [
      [1, 2, 0],
      [3, 1, 0],
      [10, 12, 9],
    ];
    const t = protectTable(labels("r", 3), labels("c", 3), counts);
    expect(t.threshold).toBe(5);
    expect(t.cells[0][0]).toBeNull();
    expect(t.cells[0][1]).toBeNull();
    expect(t.cells[1][0]).toBeNull();
    expect(t.cells[1][1]).toBeNull();
    expect(t.cells[0][2]).toBe(0);
    expect(t.cells[1][2]).toBe(0);
    expect(t.rowTotals[0]).toBeNull(); // 3 people
    expect(t.rowTotals[1]).toBeNull(); // 4 people
    const audit = auditProtectedTable(counts, t);
    expectProtected(audit);
    // Nothing hidden is a zero: a hidden zero could only move up, giving no two-sided cover.
    for (const a of audit) expect(a.value).toBeGreaterThan(0);
  });

  it("publishes unchanged numbers wherever it publishes", () => {
    const counts = smallCountTable(seeded(11), 6, 5);
    const t = protectTable(labels("r", 6), labels("c", 5), counts);
    t.cells.forEach((line, i) => {
      line.forEach((v, j) => {
        v !== null && expect(v).toBe(counts[i][j]);
      });
    });
    t.rowTotals.forEach((v, i) => {
      v !== null && expect(v).toBe(sum(counts[i]));
    });
  });

  it("is deterministic", () => {
    const counts = smallCountTable(seeded(5), 7, 6);
    const a = protectTable(labels("r", 7), labels("c", 6), counts);
    const b = protectTable(
      labels("r", 7),
      labels("c", 6),
      counts.map((r) => [...r]),
    );
    expect(b).toEqual(a);
  });
});

describe("complementary suppression on hand-made tables", () => {
  it("a row with a single suppressed cell: the row total would give it away", async () => {
    const counts = [
      [20, 3, 15],
      [12, 14, 9],
      [11, 8, 30],
    ];
    // Naive publication: 3 = 38 − 20 − 15 (row total minus the others), by hand.
    const naive = auditProtectedTable(counts, primaryOnly(counts));
    expect(naive).toEqual([{ kind: "cell", table: "detail", row: 0, column: 1, value: 3, min: 3, max: 3 }]);
    expectSameBounds(naive, await highsFlatBounds(primaryOnly(counts)), flatName);

    const t = protectTable(labels("r", 3), labels("c", 3), counts);
    // Cheapest rectangle through (0,1), by hand: (0,2)+(1,1)+(1,2) = 15+14+9 = 38 beats
    // (0,0)+(2,1)+(2,0) = 20+8+11 = 39, (0,0)+(1,1)+(1,0) = 46 and (0,2)+(2,1)+(2,2) = 53.
    expect(hiddenCells(t)).toEqual([
      [0, 1],
      [0, 2],
      [1, 1],
      [1, 2],
    ]);
    expect(t.rowTotals.every((v) => v !== null)).toBe(true);
    // One cycle: x01 = 3+s, x02 = 15−s, x12 = 9+s, x11 = 14−s, all ≥ 1 (zeros show) ⇒ s ∈ [−2, 13],
    // by hand; x01 can reach 16 ≥ 5, so the reader cannot prove the group is small.
    const audit = auditProtectedTable(counts, t);
    expect(audit.map((a) => [a.row, a.column, a.min, a.max])).toEqual([
      [0, 1, 1, 16],
      [0, 2, 2, 17],
      [1, 1, 1, 16],
      [1, 2, 7, 22],
    ]);
    expectSameBounds(audit, await highsFlatBounds(t), flatName);
  });

  it("a column with a single suppressed cell: the column total would give it away", async () => {
    const counts = [
      [2, 3, 20, 15],
      [11, 9, 30, 12],
      [14, 16, 8, 25],
    ];
    // Row 0 hides two cells, but each is alone in its column: 2 = 27 − 11 − 14 and 3 = 28 − 9 − 16.
    const naive = auditProtectedTable(counts, primaryOnly(counts));
    expect(naive.map((a) => [a.row, a.column, a.min, a.max])).toEqual([
      [0, 0, 2, 2],
      [0, 1, 3, 3],
    ]);
    const t = protectTable(labels("r", 3), labels("c", 4), counts);
    // The rectangle through (1,0) and (1,1) is no longer enough for the informed reader, by hand:
    // x00 = 2+s, x01 = 3−s ≥ 1 ⇒ s ≤ 2, so x00 ≤ 4 < 5 would prove "fewer than 5". A third column
    // (column 3 of rows 0 and 1) lets x00 rise while x01 stays ≥ 1.
    expect(hiddenCells(t)).toEqual([
      [0, 0],
      [0, 1],
      [0, 3],
      [1, 0],
      [1, 1],
      [1, 3],
    ]);
    // Hidden sums by hand: row 0 = 40 − 20 = 20, row 1 = 62 − 30 = 32; column 0 = 27 − 14 = 13,
    // column 1 = 28 − 16 = 12, column 3 = 52 − 25 = 27; every hidden number ≥ 1. E.g. x00 ≤ 13 − 1,
    // x13 = 27 − x03 ≤ 26 and x13 = 32 − x10 − x11 ≥ 32 − 12 − 11 = 9.
    const audit = auditProtectedTable(counts, t);
    expect(audit.map((a) => [a.row, a.column, a.min, a.max])).toEqual([
      [0, 0, 1, 12],
      [0, 1, 1, 11],
      [0, 3, 1, 18],
      [1, 0, 1, 12],
      [1, 1, 1, 11],
      [1, 3, 9, 26],
    ]);
    expectProtected(audit);
    expectSameBounds(audit, await highsFlatBounds(t), flatName);
  });

  it("only a multi-row combination reveals a cell: every line hides ≥ 2 numbers, yet one is exact", async () => {
    const counts = [
      [2, 3, 10, 10],
      [3, 2, 1, 10],
      [10, 10, 2, 3],
      [10, 10, 3, 2],
    ];
    const naivePublished = primaryOnly(counts);
    for (const line of naivePublished.cells) expect(line.filter((v) => v === null).length).toBeGreaterThanOrEqual(2);
    for (let j = 0; j < 4; j++)
      expect(naivePublished.cells.filter((line) => line[j] === null).length).toBeGreaterThanOrEqual(2);
    // Rows 1+2 minus columns 1+2 (1-based), by hand: (25 + 16) − (25 + 25 − 20 − 20) − 10 − 10 − 10 = 1.
    const naive = auditProtectedTable(counts, naivePublished);
    const exact = naive.filter((a) => a.min === a.max);
    expect(exact).toEqual([{ kind: "cell", table: "detail", row: 1, column: 2, value: 1, min: 1, max: 1 }]);
    expectSameBounds(naive, await highsFlatBounds(naivePublished), flatName);

    // The product's fast check (witness tables from LP optima) flags the first unsafe number: cell (0,0)
    // = 2, which the informed reader can also prove is below 5 (its HiGHS maximum, asserted here).
    const system = flatTableSystem(counts, 4);
    const mask = (p: ProtectedTable) =>
      [...p.cells.flatMap((line, i) => [...line, p.rowTotals[i]]), ...p.columnTotals, p.grandTotal].map(
        (v) => v === null,
      );
    expect(firstUnsafeEntry(system, mask(naivePublished), 5)).toBe(0);
    expect(naive.find((a) => a.row === 0 && a.column === 0)!.max).toBeLessThan(5);

    const t = protectTable(labels("r", 4), labels("c", 4), counts);
    expect(firstUnsafeEntry(system, mask(t), 5)).toBeNull();
    const audit = auditProtectedTable(counts, t);
    expect(audit.length).toBeGreaterThan(naive.length);
    expectProtected(audit);
    expectSameBounds(audit, await highsFlatBounds(t), flatName);
  });

  it("a table of one small count hides everything; nothing caps it", async () => {
    const t = protectTable(["r1"], ["c1"], [[3]]);
    expect(t).toMatchObject({ cells: [[null]], rowTotals: [null], columnTotals: [null], grandTotal: null });
    const audit = auditProtectedTable([[3]], t);
    expect(audit.map((a) => [a.min, a.max])).toEqual([
      [1, Infinity],
      [1, Infinity],
      [1, Infinity],
      [1, Infinity],
    ]);
    expectSameBounds(audit, await highsFlatBounds(t), flatName);
  });

  it("zero rows and columns show as published zeros", () => {
    const t = protectTable(
      ["a", "b"],
      ["x", "y"],
      [
        [0, 0],
        [7, 9],
      ],
    );
    expect(t).toMatchObject({
      cells: [
        [0, 0],
        [7, 9],
      ],
      rowTotals: [0, 16],
      columnTotals: [7, 9],
      grandTotal: 16,
    });
  });
});

describe("audit: javascript-lp-solver (product) and HiGHS (reference) on 50 seeded tables", () => {
  it("every hidden number meets the informed-reader rule and both solvers agree", async () => {
    const random = seeded(20240611);
    let hiddenTotal = 0;
    for (let k = 0; k < 50; k++) {
      const m = 3 + Math.floor(random() * 6);
      const n = 3 + Math.floor(random() * 5);
      const counts = smallCountTable(random, m, n);
      const t = protectTable(labels("r", m), labels("c", n), counts);
      // Every small count is hidden.
      counts.forEach((line, i) => {
        line.forEach((v, j) => {
          v > 0 && v < 5 && expect(t.cells[i][j]).toBeNull();
        });
      });
      counts.forEach((line, i) => {
        sum(line) > 0 && sum(line) < 5 && expect(t.rowTotals[i]).toBeNull();
      });
      const audit = auditProtectedTable(counts, t);
      hiddenTotal += audit.length;
      expectProtected(audit);
      expectSameBounds(audit, await highsFlatBounds(t), flatName);
    }
    expect(hiddenTotal).toBeGreaterThan(200); // the tables really had many small counts
  });
});

describe("the informed reader (knows the threshold, that zeros show, and every published number)", () => {
  it("regression: two hidden cells of one row that must sum to 2 are both exactly 1", async () => {
    const counts = [
      [5, 1, 14, 1],
      [0, 1, 0, 14],
      [22, 3, 0, 15],
      [15, 0, 11, 20],
      [3, 0, 3, 0],
    ];
    // The pattern the audit used to accept (it assumed hidden ≥ 0). By hand: column 1 gives
    // x01 + x11 + x21 = 5, column 3 gives x03 + x13 + x23 = 50 − 20 = 30, rows 1 and 2 give
    // x11 + x13 = 15 and x21 + x23 = 40 − 22 = 18; so x01 + x03 = 35 − 33 = 2, and with both ≥ 1
    // (zeros show) both are exactly 1. Under "hidden ≥ 0" they only lay in [0, 2].
    const leaky: ProtectedTable = {
      rows: labels("r", 5),
      columns: labels("c", 4),
      cells: [
        [null, null, null, null],
        [0, null, 0, null],
        [22, null, 0, null],
        [15, 0, 11, 20],
        [null, 0, null, 0],
      ],
      rowTotals: [21, 15, 40, 46, 6],
      columnTotals: [45, 5, 28, 50],
      grandTotal: 128,
      threshold: 5,
    };
    const informed = await highsFlatBounds(leaky);
    for (const j of [1, 3]) {
      const b = informed.find((x) => x.name === auditNames.cellName("", 0, j))!;
      expect([b.min, b.max]).toEqual([1, 1]);
    }
    const product = auditProtectedTable(counts, leaky);
    expect(product.find((a) => a.row === 0 && a.column === 1)).toMatchObject({ min: 1, max: 1 });
    expect(product.find((a) => a.row === 0 && a.column === 3)).toMatchObject({ min: 1, max: 1 });
    expectSameBounds(product, informed, flatName);

    const t = protectTable(labels("r", 5), labels("c", 4), counts);
    const audit = auditProtectedTable(counts, t);
    expect(audit.length).toBeGreaterThan(0);
    expectProtected(audit);
    const reference = await highsFlatBounds(t);
    expectProtected(reference.map((b) => ({ ...b, value: trueValue(counts, b.name) })));
    expectSameBounds(audit, reference, flatName);
  });

  it("200 seeded tables (2×2 … 8×6): HiGHS finds 0 exact recoveries and 0 provably small groups", async () => {
    const tables = randomTables(20261203, 200);
    let hidden = 0;
    let exact = 0;
    let provablySmall = 0;
    let primary = 0;
    let cells = 0;
    for (const counts of tables) {
      const m = counts.length;
      const n = counts[0].length;
      const t = protectTable(labels("r", m), labels("c", n), counts);
      cells += m * n;
      counts.forEach((line, i) => {
        line.forEach((v, j) => {
          if (v > 0 && v < 5) {
            primary++;
            expect(t.cells[i][j]).toBeNull();
          }
          if (v === 0) expect(t.cells[i][j]).toBe(0);
        });
      });
      for (const b of await highsFlatBounds(t)) {
        hidden++;
        const value = trueValue(counts, b.name);
        if (wholeValues(b.min, b.max) < 2) exact++;
        if (value < 5 && b.max < 5 - 1e-6) provablySmall++;
      }
    }
    expect({ exact, provablySmall }).toEqual({ exact: 0, provablySmall: 0 });
    expect(primary).toBeGreaterThan(1000); // the tables really had many small counts
    expect(hidden).toBeGreaterThan(primary);
    expect(cells).toBeGreaterThan(3000);
  }, 900_000);
});

describe("linked views: department × stage and site × stage published together", () => {
  const stages = ["consented", "baselined", "training"];
  const departments = ["Kitting", "Paint Prep", "Inspection", "Final Assembly"];
  const sites = ["North Yard", "North Yard", "Riverside", "Riverside"];
  const counts = [
    [2, 10, 10],
    [10, 10, 10],
    [10, 3, 10],
    [10, 10, 10],
  ];

  it("protecting each table alone leaks by differencing; protecting them jointly does not", async () => {
    const detailAlone = protectTable(departments, stages, counts);
    const siteCounts = [
      [12, 20, 20],
      [20, 13, 20],
    ];
    const siteAlone = protectTable(["North Yard", "Riverside"], stages, siteCounts);
    expect(siteAlone.cells.flat().every((v) => v !== null)).toBe(true); // nothing small at site level
    // Kitting "consented" = North Yard 12 − Paint Prep 10 = 2 (by hand) when both are shown.
    const joint = await highsLinkedBounds(detailAlone, siteAlone, [0, 0, 1, 1]);
    const kitting = joint.find((b) => b.name === auditNames.cellName("d", 0, 0))!;
    expect(kitting.min).toBeCloseTo(2, 6);
    expect(kitting.max).toBeCloseTo(2, 6);

    const input = { detail: { rows: departments, columns: stages, counts }, parentOf: sites };
    const linked = protectLinkedTables(input);
    expect(linked.parent.rows).toEqual(["North Yard", "Riverside"]);
    expect(linked.detail.cells[0][0]).toBeNull();
    expect(linked.detail.cells[2][1]).toBeNull();
    const audit = auditLinkedTables(input, linked);
    expectProtected(audit);
    expectSameBounds(audit, await highsLinkedBounds(linked.detail, linked.parent, [0, 0, 1, 1]), linkedName);
    // Shown site numbers are the department sums.
    linked.parent.cells.forEach((line, p) => {
      line.forEach((v, j) => {
        v !== null && expect(v).toBe(counts[2 * p][j] + counts[2 * p + 1][j]);
      });
    });
  });

  it("20 seeded linked tables: no hidden number is recoverable from both tables together", async () => {
    const random = seeded(77);
    for (let k = 0; k < 20; k++) {
      const siteCount = 2 + Math.floor(random() * 3);
      const parentOf: string[] = [];
      for (let s = 0; s < siteCount; s++) {
        const size = 1 + Math.floor(random() * 4);
        for (let d = 0; d < size; d++) parentOf.push(`site ${s + 1}`);
      }
      const n = 3 + Math.floor(random() * 4);
      const detailCounts = smallCountTable(random, parentOf.length, n);
      const input = {
        detail: { rows: labels("dept ", parentOf.length), columns: labels("stage ", n), counts: detailCounts },
        parentOf,
      };
      const linked = protectLinkedTables(input);
      detailCounts.forEach((line, i) => {
        line.forEach((v, j) => {
          v > 0 && v < 5 && expect(linked.detail.cells[i][j]).toBeNull();
        });
      });
      const audit = auditLinkedTables(input, linked);
      expectProtected(audit);
      const parentOfRow = parentOf.map((p) => Number(p.split(" ")[1]) - 1);
      expectSameBounds(audit, await highsLinkedBounds(linked.detail, linked.parent, parentOfRow), linkedName);
    }
  });
});

describe("shares and medians", () => {
  it("medians only for groups of at least the threshold", () => {
    expect(protectMedian([4, 1, 3, 2])).toBeNull();
    // Reference: simple-statistics median (odd and even counts).
    expect(protectMedian([5, 1, 4, 2, 3])).toBe(referenceMedian([5, 1, 4, 2, 3]));
    expect(protectMedian([6, 1, 4, 2, 3, 10])).toBe(referenceMedian([6, 1, 4, 2, 3, 10]));
    expect(protectMedian({ count: 4, median: 12 })).toBeNull();
    expect(protectMedian({ count: 5, median: 12 })).toBe(12);
    expect(protectMedian([1, 2, 3, 4, 5, 6], 8)).toBeNull();
  });

  // Rule of docs/consent-and-disclosure.md (threshold 5: common practice); a share with its group size gives the count
  // back, so numerator and remainder follow the cell rule (1–4 hidden, 0 shown).
  it("shares hidden for small groups and small numerators or remainders", () => {
    expect(suppressedShare(3, 4)).toBeNull(); // group of 4
    expect(suppressedShare(2, 20)).toBeNull(); // 10 % of 20 is 2 people
    expect(suppressedShare(18, 20)).toBeNull(); // the other 2 people
    expect(suppressedShare(10, 20)).toBe(0.5);
    expect(suppressedShare(0, 20)).toBe(0);
    expect(suppressedShare(20, 20)).toBe(1);
    expect(() => suppressedShare(5, 4)).toThrow(RangeError);
  });
});

// Threshold of 5: common practice in health statistics, no single published source (docs/consent-and-disclosure.md).
describe("threshold", () => {
  const counts = [
    [4, 6, 9],
    [8, 5, 7],
    [9, 9, 9],
  ];
  it("a threshold below 5 is raised to 5", () => {
    const t = protectTable(labels("r", 3), labels("c", 3), counts, { threshold: 3 });
    expect(t.threshold).toBe(5);
    expect(t.cells[0][0]).toBeNull(); // 4 < 5 although 4 ≥ 3
    expect(protectMedian([1, 2, 3, 4], 2)).toBeNull();
    expect(suppressedShare(4, 10, 1)).toBeNull();
    expect(
      protectLinkedTables({ detail: { rows: ["a"], columns: ["x"], counts: [[7]] }, parentOf: ["s"], threshold: 2 })
        .threshold,
    ).toBe(5);
  });
  it("a larger threshold hides more", () => {
    const t = protectTable(labels("r", 3), labels("c", 3), counts, { threshold: 7 });
    expect(t.threshold).toBe(7);
    expect(t.cells[0][1]).toBeNull(); // 6
    expect(t.cells[1][1]).toBeNull(); // 5
    expectProtected(auditProtectedTable(counts, t));
  });
  it("refuses nonsense", () => {
    expect(() => protectTable(["r"], ["c"], [[1]], { threshold: Number.NaN })).toThrow(RangeError);
    expect(() => protectTable(["r"], ["c"], [[1.5]])).toThrow(RangeError);
    expect(() => protectTable(["r"], ["c"], [[-1]])).toThrow(RangeError);
    expect(() => protectTable(["r", "s"], ["c"], [[1]])).toThrow(RangeError);
    expect(() =>
      protectLinkedTables({ detail: { rows: ["a", "b"], columns: ["x"], counts: [[1], [2]] }, parentOf: ["s"] }),
    ).toThrow(RangeError);
  });
});

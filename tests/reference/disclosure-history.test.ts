// Two consecutive publications of one organisation table to the same manager, the second protected
// against the first (app/compute/disclosure-history.ts), with one worker changing stage in between.
// Reference: the pair is audited by the product (auditLinked) AND by HiGHS (npm `highs`) in a formulation
// written separately (tests/reference/disclosure-audit.ts). One site, so the site table repeats the
// department table's column totals and the two-table HiGHS model is the whole reader.

import { describe, expect, it } from "vitest";
import { auditLinked, type LinkedInterval } from "~/compute/disclosure";
import { protectOverTime, type StoredPublication, type TableCounts } from "~/compute/disclosure-history";
import { highsTwoTimesBounds } from "./disclosure-audit";

const rows = ["Plant · Kitting", "Plant · Paint Prep", "Plant · Inspection", "Plant · Final Assembly"];
const columns = ["Baselined", "In a plan", "Training", "Proficient"];
const week1 = [
  [11, 3, 17, 2],
  [7, 9, 4, 1],
  [12, 5, 6, 0],
  [0, 0, 14, 24],
];
// One Kitting worker moves from "Baselined" to "In a plan" (a hidden 3 becomes a hidden 4).
const week2 = week1.map((line) => [...line]);
week2[0][0] -= 1;
week2[0][1] += 1;
const table = (counts: number[][]): TableCounts => ({
  rows,
  parentOf: rows.map(() => "plant"),
  columns,
  counts,
  threshold: 5,
});

const wholeValues = (min: number, max: number) =>
  max === Infinity ? Infinity : Math.floor(max + 1e-6) - Math.ceil(min - 1e-6) + 1;
const truth = (counts: number[][], name: string) => {
  const [head, ...idx] = name.split("_");
  const at = idx.map(Number);
  if (head.endsWith("c")) return counts[at[0]][at[1]];
  if (head.endsWith("r")) return counts[at[0]].reduce((a, b) => a + b, 0);
  if (head.endsWith("k")) return counts.reduce((a, line) => a + line[at[0]], 0);
  return counts.flat().reduce((a, b) => a + b, 0);
};
/** Leaks of the informed reader: exact numbers, provably small numbers, provable gains or losses. */
function highsLeaks(bounds: { name: string; min: number; max: number }[]) {
  return bounds.filter((b) => {
    if (b.name.startsWith("dc_")) return !(b.min <= 1e-6 && b.max >= -1e-6);
    const value = truth(b.name.startsWith("b") ? week1 : week2, b.name);
    return wholeValues(b.min, b.max) < 2 || (value < 5 && b.max < 5 - 1e-6);
  });
}
function productLeaks(bounds: LinkedInterval[]) {
  return bounds.filter((b) => {
    if (b.quantity === "change") return !(b.min <= 1e-6 && b.max >= -1e-6);
    return wholeValues(b.min, b.max) < 2 || (b.value < 5 && b.max < 5 - 1e-6);
  });
}

describe("a publication protected against the previous one", () => {
  const first = protectOverTime(table(week1), null);
  if (first.status !== "ok") throw new Error("the first publication must be publishable");
  const stored: StoredPublication = {
    id: 1,
    grouping: "stages",
    counts: table(week1),
    published: first.published,
    note: null,
  };

  it("the first publication stands alone", () => {
    expect(first.linkedTo).toBeNull();
    expect(first.published.detail.cells[0][1]).toBeNull(); // 3 < 5
  });

  it("the second hides enough that neither week nor the move can be worked out (product audit = HiGHS)", async () => {
    const second = protectOverTime(table(week2), stored);
    expect(second.status).toBe("ok");
    if (second.status !== "ok") return;
    expect(second.linkedTo).toBe(1);
    const pub = (t: typeof first.published.detail) => ({
      cells: t.cells,
      rowTotals: t.rowTotals,
      columnTotals: t.columnTotals,
      grandTotal: t.grandTotal,
    });
    // Every shown number is the true count; every small count is hidden.
    week2.forEach((line, i) => {
      line.forEach((v, j) => {
        const shown = second.published.detail.cells[i][j];
        if (shown !== null) expect(shown).toBe(v);
        if (v > 0 && v < 5) expect(shown).toBeNull();
      });
    });
    const joint = await highsTwoTimesBounds(pub(first.published.detail), pub(second.published.detail), 2);
    expect(joint.length).toBeGreaterThan(0);
    expect(highsLeaks(joint)).toEqual([]);
    // "Nobody joined Kitting / In a plan" is consistent with both weeks.
    const destination = joint.find((b) => b.name === "dc_0_1")!;
    expect(destination.min).toBeLessThanOrEqual(1e-6);
    const site = (counts: number[][]) => [columns.map((_, j) => counts.reduce((s, line) => s + line[j], 0))];
    const product = auditLinked(
      [
        { rows, columns, counts: week1, published: pub(first.published.detail) },
        { rows: ["plant"], columns, counts: site(week1), published: pub(first.published.parent) },
        { rows, columns, counts: week2, published: pub(second.published.detail) },
        { rows: ["plant"], columns, counts: site(week2), published: pub(second.published.parent) },
      ],
      [
        { kind: "rollup", detail: 0, parent: 1, parentOf: [0, 0, 0, 0] },
        { kind: "rollup", detail: 2, parent: 3, parentOf: [0, 0, 0, 0] },
        { kind: "change", before: 0, after: 2, maxCellChange: 2 },
      ],
    );
    expect(productLeaks(product)).toEqual([]);
  });

  it("a count of 0 last time and 1 person now cannot be protected: the table is withheld", () => {
    // A Final Assembly worker moves "Training" → "Baselined": 0 → 1, and with 2 cell changes the reader
    // knows it is at most 0 + 2 < 5 however much is hidden (by hand).
    const moved = week1.map((line) => [...line]);
    moved[3][2] -= 1;
    moved[3][0] += 1;
    const out = protectOverTime(table(moved), stored);
    expect(out.status).toBe("withheld");
    if (out.status === "withheld") expect(out.reason).toMatch(/moved between small groups/);
  });

  it("a changed layout is not linked, and says so", () => {
    const wider: TableCounts = { ...table(week2), rows: [...rows.slice(0, 3), "Plant · Logistics"] };
    const out = protectOverTime(wider, stored);
    expect(out).toMatchObject({ status: "ok", linkedTo: null });
    if (out.status === "ok") expect(out.note).toMatch(/not linked/);
  });
});

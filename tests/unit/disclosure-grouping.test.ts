import { describe, expect, it } from "vitest";
import { cellChange, chooseGrouping, hiddenShare, sameCounts, type TableCounts } from "~/compute/disclosure-history";
import { STAGE_BAND_OF, STAGE_BANDS, STAGES } from "~/domain/stages";

// The grouping rule of the readiness board (docs/consent-and-disclosure.md): the finest grouping whose
// protection hides at most the organisation's share of cells; otherwise the one that hides least.
// Expected values worked out by hand beside each case.

const c = (key: string, share: number) => ({ key, table: key, share });

describe("chooseGrouping", () => {
  it("keeps the finest grouping when it hides no more than the share", () => {
    // 0.25 ≤ 0.25: the boundary counts as within.
    expect(chooseGrouping([c("stages", 0.25), c("bands", 0)], 0.25)).toEqual({
      chosen: c("stages", 0.25),
      fellBack: false,
      withinShare: true,
    });
  });

  it("falls back to the first coarser grouping within the share", () => {
    // 14 of 27 stage cells hidden = 0.52 > 0.25; bands hide 2 of 12 = 0.17.
    const out = chooseGrouping([c("stages", 14 / 27), c("bands", 2 / 12), c("coarsest", 0)], 0.25);
    expect(out.chosen.key).toBe("bands");
    expect(out.fellBack).toBe(true);
    expect(out.withinShare).toBe(true);
  });

  it("when none is within the share, takes the one hiding least, the coarser on a tie", () => {
    expect(chooseGrouping([c("stages", 0.6), c("bands", 0.4)], 0.25)).toMatchObject({
      chosen: { key: "bands" },
      withinShare: false,
    });
    expect(chooseGrouping([c("stages", 0.4), c("bands", 0.4)], 0.25).chosen.key).toBe("bands");
    expect(chooseGrouping([c("stages", 0.3), c("bands", 0.5)], 0.25)).toMatchObject({
      chosen: { key: "stages" },
      fellBack: false,
      withinShare: false,
    });
  });

  it("a stricter organisation share moves the choice", () => {
    const list = [c("stages", 0.2), c("bands", 0.1)];
    expect(chooseGrouping(list, 0.25).chosen.key).toBe("stages");
    expect(chooseGrouping(list, 0.15).chosen.key).toBe("bands");
  });

  it("refuses an empty list", () => {
    expect(() => chooseGrouping([], 0.25)).toThrow(RangeError);
  });
});

describe("hiddenShare, sameCounts, cellChange", () => {
  it("counts hidden cells only (totals are not cells)", () => {
    expect(
      hiddenShare({
        cells: [
          [null, 3],
          [5, null],
          [0, 7],
        ],
      }),
    ).toBeCloseTo(2 / 6, 12);
    expect(hiddenShare({ cells: [] })).toBe(0);
  });

  const base: TableCounts = {
    rows: ["A · 1", "A · 2"],
    parentOf: ["1", "1"],
    columns: ["x", "y"],
    counts: [
      [5, 6],
      [7, 0],
    ],
    threshold: 5,
  };

  it("sameCounts needs the same layout, threshold and every count", () => {
    expect(sameCounts(base, structuredClone(base))).toBe(true);
    expect(sameCounts(base, { ...base, threshold: 6 })).toBe(false);
    expect(sameCounts(base, { ...base, columns: ["x", "z"] })).toBe(false);
    expect(
      sameCounts(base, {
        ...base,
        counts: [
          [5, 6],
          [6, 1],
        ],
      }),
    ).toBe(false);
  });

  it("cellChange is Σ |after − before|: one person moving between cells changes it by 2", () => {
    expect(
      cellChange(base.counts, [
        [5, 6],
        [6, 1],
      ]),
    ).toBe(2);
  });
});

describe("stage bands", () => {
  it("every stage lies in exactly one band, and every band holds a stage", () => {
    for (const s of STAGES) expect(STAGE_BANDS).toContain(STAGE_BAND_OF[s]);
    for (const b of STAGE_BANDS) expect(STAGES.some((s) => STAGE_BAND_OF[s] === b)).toBe(true);
  });
});

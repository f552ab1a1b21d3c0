// "Real change" verdicts between two baselines: reliable change index (Jacobson & Truax 1991) per measure,
// Holm's (1979) correction over the measures compared. Numbers worked by hand beside each check.
import { describe, expect, it } from "vitest";
import { changesSincePrevious, type MeasureReliability } from "~/models/reliability-report.server";

const rel = (measureId: number, sd: number, icc21: number): MeasureReliability => {
  const sem = sd * Math.sqrt(1 - icc21);
  return {
    measureId,
    code: `m${measureId}`,
    name: `M${measureId}`,
    unit: "u",
    n: 20,
    icc21,
    icc31: icc21,
    sd,
    sem,
    mdc95: 1.959963985 * Math.SQRT2 * sem,
  };
};
const result = (measureId: number, value: number) => ({
  measureId,
  name: `M${measureId}`,
  unit: "u",
  higherIsBetter: true,
  value,
});

describe("changesSincePrevious", () => {
  // SD 10, ICC 0.8 → SE of a difference √2·10·√0.2 = 6.3246 for every measure.
  const reliability = new Map([1, 2, 3].map((id) => [id, rel(id, 10, 0.8)]));
  const sessions = [
    { results: [result(1, 50), result(2, 50), result(3, 50)] },
    // Changes 20, 14, −20 → RCI 3.162, 2.214, −3.162 → p 0.00157, 0.0268, 0.00157 (normal table).
    { results: [result(1, 70), result(2, 64), result(3, 30)] },
  ];
  const rows = changesSincePrevious(sessions, reliability);

  it("computes the reliable change index of each measure", () => {
    expect(rows.map((r) => r.rci)).toEqual([
      expect.closeTo(3.162278, 5),
      expect.closeTo(2.213594, 5),
      expect.closeTo(-3.162278, 5),
    ]);
  });

  it("flags only what survives Holm's correction over the three measures", () => {
    // Holm: sorted p 0.00157, 0.00157, 0.0268 against 0.05/3, 0.05/2, 0.05/1 → all three rejected;
    // adjusted p of measure 2 = max(0.00157·3, 0.00157·2, 0.0268·1) = 0.0268.
    expect(rows.map((r) => r.verdict)).toEqual(["better", "better", "worse"]);
    expect(rows[1].adjustedP).toBeCloseTo(0.02685, 4);
    // A change that passes the MDC95 rule on its own (|14| > 12.4) fails once five more measures are compared.
    const many = new Map([1, 2, 3, 4, 5, 6].map((id) => [id, rel(id, 10, 0.8)]));
    const wide = changesSincePrevious(
      [
        { results: [1, 2, 3, 4, 5, 6].map((id) => result(id, 50)) },
        { results: [result(1, 50), result(2, 64), result(3, 50), result(4, 50), result(5, 50), result(6, 50)] },
      ],
      many,
    );
    expect(Math.abs(wide[1].change)).toBeGreaterThan(wide[1].mdc95 as number);
    expect(wide[1].verdict).toBe("within error");
    expect(wide[1].adjustedP).toBeCloseTo(Math.min(1, 0.02685 * 6), 3);
  });

  it("says when a measure has no reliability yet", () => {
    const none = changesSincePrevious(sessions, new Map());
    expect(none.map((r) => r.verdict)).toEqual(["no MDC yet", "no MDC yet", "no MDC yet"]);
    expect(none[0].rci).toBeNull();
  });
});

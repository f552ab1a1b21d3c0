// Reliability checked against Shrout & Fleiss (1979) and Weir (2005), plus an independent ANOVA.

import * as ss from "simple-statistics";
import { describe, expect, it } from "vitest";
import {
  ICC_FORMS,
  type IccForm,
  iccMeanSquares,
  intraclassCorrelation,
  minimalDetectableChange,
  standardErrorOfMeasurement,
  twoSidedZ,
} from "~/compute/reliability";

// Shrout & Fleiss (1979), Psychological Bulletin 86:420–428, worked example: 6 targets × 4 judges.
const SHROUT_FLEISS = [
  [9, 2, 5, 8],
  [6, 1, 3, 2],
  [8, 4, 6, 8],
  [7, 1, 2, 6],
  [10, 5, 6, 9],
  [6, 2, 4, 7],
];
// ICCs published with that example (as quoted in docs/methods.md; their ICC(·,4) = ICC(·,k) here).
const PUBLISHED: Record<IccForm, number> = {
  "ICC(1,1)": 0.17,
  "ICC(2,1)": 0.29,
  "ICC(3,1)": 0.71,
  "ICC(1,k)": 0.44,
  "ICC(2,k)": 0.62,
  "ICC(3,k)": 0.91,
};

/**
 * A second ANOVA written differently: mean squares from sample variances of row and column means
 * (simple-statistics), the within-target MS as the average within-row variance, and the residual MS
 * from explicitly formed interaction residuals — no total-minus-parts subtraction.
 */
function independentIcc(x: number[][], form: IccForm): number {
  const n = x.length;
  const k = x[0].length;
  const rowMeans = x.map((r) => ss.mean(r));
  const colMeans = Array.from({ length: k }, (_, j) => ss.mean(x.map((r) => r[j])));
  const grand = ss.mean(x.flat());
  const bms = k * ss.sampleVariance(rowMeans);
  const jms = n * ss.sampleVariance(colMeans);
  const wms = ss.mean(x.map((r) => ss.sampleVariance(r)));
  const residuals = x.flatMap((r, i) => r.map((v, j) => v - rowMeans[i] - colMeans[j] + grand));
  const ems = ss.sum(residuals.map((e) => e * e)) / ((n - 1) * (k - 1));
  const forms: Record<IccForm, number> = {
    "ICC(1,1)": (bms - wms) / (bms + (k - 1) * wms),
    "ICC(2,1)": (bms - ems) / (bms + (k - 1) * ems + (k / n) * (jms - ems)),
    "ICC(3,1)": (bms - ems) / (bms + (k - 1) * ems),
    "ICC(1,k)": (bms - wms) / bms,
    "ICC(2,k)": (bms - ems) / (bms + (jms - ems) / n),
    "ICC(3,k)": (bms - ems) / bms,
  };
  return forms[form];
}

describe("intraclassCorrelation", () => {
  it("reproduces the published mean squares of the worked example", () => {
    // Shrout & Fleiss (1979), ANOVA table of the example (values from memory): BMS 11.24, WMS 6.26, JMS 32.49, EMS 1.02.
    const ms = iccMeanSquares(SHROUT_FLEISS);
    expect(ms.bms).toBeCloseTo(11.24, 2);
    expect(ms.wms).toBeCloseTo(6.26, 2);
    expect(ms.jms).toBeCloseTo(32.49, 2);
    expect(ms.ems).toBeCloseTo(1.02, 2);
  });

  it.each(ICC_FORMS)("%s matches the published value to two decimals", (form) => {
    const icc = intraclassCorrelation(SHROUT_FLEISS, form);
    expect(Number(icc.toFixed(2))).toBe(PUBLISHED[form]);
  });

  it.each(ICC_FORMS)("%s matches an independent ANOVA to 1e-9", (form) => {
    expect(Math.abs(intraclassCorrelation(SHROUT_FLEISS, form) - independentIcc(SHROUT_FLEISS, form))).toBeLessThan(
      1e-9,
    );
  });

  it.each(ICC_FORMS)("%s matches the independent ANOVA on a 30 × 3 test–retest table", (form) => {
    // Deterministic pseudo-data: subject level + session drift + error (values are arbitrary).
    const table = Array.from({ length: 30 }, (_, i) => {
      const subject = 40 + ((i * 37) % 23);
      return [0, 1.5, 0.7].map((drift, j) => subject + drift + (((i * 13 + j * 7) % 11) - 5) * 0.4);
    });
    expect(Math.abs(intraclassCorrelation(table, form) - independentIcc(table, form))).toBeLessThan(1e-9);
  });

  it("separates consistency from absolute agreement when raters differ only by an offset", () => {
    // x_ij = s_i + c_j: no residual error, so consistency ICC(3,·) = 1 while agreement ICC(2,·) < 1
    // (Shrout & Fleiss 1979: Case 3 ignores judge mean differences, Case 2 counts them).
    const offsets = [0, 2, 4];
    const table = [3, 7, 5, 10, 1].map((s) => offsets.map((c) => s + c));
    expect(intraclassCorrelation(table, "ICC(3,1)")).toBeCloseTo(1, 12);
    expect(intraclassCorrelation(table, "ICC(3,k)")).toBeCloseTo(1, 12);
    expect(intraclassCorrelation(table, "ICC(2,1)")).toBeLessThan(1);
    expect(intraclassCorrelation(table, "ICC(2,1)")).toBeCloseTo(independentIcc(table, "ICC(2,1)"), 12);
  });

  it("requires a complete, finite matrix", () => {
    expect(() => intraclassCorrelation([[1, 2, 3]], "ICC(1,1)")).toThrow(/at least 2 subjects/);
    expect(() => intraclassCorrelation([[1], [2]], "ICC(1,1)")).toThrow(/at least 2 raters/);
    expect(() => intraclassCorrelation([[1, 2], [3]], "ICC(2,1)")).toThrow(/complete/);
    expect(() =>
      intraclassCorrelation(
        [
          [1, 2],
          [3, Number.NaN],
        ],
        "ICC(3,1)",
      ),
    ).toThrow(/missing values/);
    expect(() =>
      intraclassCorrelation(
        [
          [1, 1],
          [1, 1],
        ],
        "ICC(3,1)",
      ),
    ).toThrow(/undefined/);
    expect(() => intraclassCorrelation(SHROUT_FLEISS, "ICC(4,1)" as IccForm)).toThrow(/unknown ICC form/);
  });
});

describe("standard error of measurement and minimal detectable change", () => {
  // Weir (2005), J Strength Cond Res 19:231–240: SEM = SD·√(1 − ICC); MDC = SEM × 1.96 × √2.
  it("computes SEM = SD·√(1 − r) (hand-worked: SD 10, r 0.84 → 4)", () => {
    expect(standardErrorOfMeasurement(10, 0.84)).toBeCloseTo(4, 12);
    expect(standardErrorOfMeasurement(7.5, 1)).toBe(0);
    expect(standardErrorOfMeasurement(7.5, 0)).toBe(7.5);
  });

  it("computes MDC95 = 1.959963985 · √2 · SEM (hand-worked: SEM 4 → 11.0872306)", () => {
    // 1.959963985 × 1.414213562 = 2.771807649; × 4 = 11.08723060.
    expect(minimalDetectableChange(4)).toBeCloseTo(11.0872306, 6);
    expect(minimalDetectableChange(4, 0.95)).toBeCloseTo(4 * 1.959963985 * Math.SQRT2, 8);
  });

  it("uses normal quantiles from standard tables at other confidence levels", () => {
    // Two-sided z: 0.90 → 1.644853627, 0.95 → 1.959963985, 0.99 → 2.575829304 (standard normal tables).
    expect(twoSidedZ(0.9)).toBeCloseTo(1.644853627, 8);
    expect(twoSidedZ(0.95)).toBeCloseTo(1.959963985, 8);
    expect(twoSidedZ(0.99)).toBeCloseTo(2.575829304, 8);
    expect(minimalDetectableChange(2, 0.9)).toBeCloseTo(2 * 1.644853627 * Math.SQRT2, 8);
  });

  it("refuses values outside their range", () => {
    expect(() => standardErrorOfMeasurement(-1, 0.5)).toThrow(RangeError);
    expect(() => standardErrorOfMeasurement(1, 1.2)).toThrow(RangeError);
    expect(() => standardErrorOfMeasurement(1, -0.1)).toThrow(/below 0/);
    expect(() => minimalDetectableChange(1, 1)).toThrow(/confidence/);
    expect(() => minimalDetectableChange(Number.NaN)).toThrow(RangeError);
  });
});

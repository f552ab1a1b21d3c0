// ICC confidence intervals, the Koo & Li label, the reliable change index and multiplicity control.
// Outside sources: the Shrout & Fleiss (1979) 6 × 4 example with the intervals the R package psych prints
// for it (ICC(1,1) −0.13 to 0.72, ICC(2,1) 0.019 to 0.76, ICC(3,1) 0.34 to 0.95; quoted from memory of its
// documentation, so checked to 2 decimals); test inversion with jStat's F distribution (an exact ICC(3,1)
// bound is where the F test of ρ = bound has p = α/2); the Benjamini & Hochberg (1995) worked example.

// @ts-expect-error -- jstat ships no type declarations; used here only as the independent F distribution
import jStatLib from "jstat";
import { describe, expect, it } from "vitest";
import { benjaminiHochberg, holm } from "~/compute/multiplicity";
import {
  iccConfidenceInterval,
  iccMeanSquares,
  reliabilityLabel,
  reliableChangeIndex,
  standardErrorOfMeasurement,
} from "~/compute/reliability";

const jStat = jStatLib as { centralF: { cdf(x: number, a: number, b: number): number } };

// Shrout & Fleiss (1979), Table 2: 6 targets rated by 4 judges.
const SF = [
  [9, 2, 5, 8],
  [6, 1, 3, 2],
  [8, 4, 6, 8],
  [7, 1, 2, 6],
  [10, 5, 6, 9],
  [6, 2, 4, 7],
];

describe("ICC confidence intervals (McGraw & Wong 1996)", () => {
  it.each([
    ["ICC(1,1)", -0.13, 0.72],
    ["ICC(2,1)", 0.019, 0.76],
    ["ICC(3,1)", 0.34, 0.95],
  ] as const)("%s on the Shrout & Fleiss example matches psych's printed interval", (form, lower, upper) => {
    const ci = iccConfidenceInterval(SF, form);
    expect(Math.abs(ci.lower - lower)).toBeLessThan(form === "ICC(2,1)" ? 0.005 : 0.01);
    expect(Math.abs(ci.upper - upper)).toBeLessThan(0.01);
    expect(ci.lower).toBeLessThan(ci.icc);
    expect(ci.upper).toBeGreaterThan(ci.icc);
  });

  it("ICC(3,1) bounds invert the exact F test (jStat's F distribution)", () => {
    const { subjects: n, raters: k, bms, ems } = iccMeanSquares(SF);
    const ci = iccConfidenceInterval(SF, "ICC(3,1)", 0.9);
    // Under ρ, F = (BMS/EMS)·(1 − ρ)/(1 + (k − 1)ρ) follows F(n − 1, (n − 1)(k − 1)).
    const tail = (rho: number) =>
      1 - jStat.centralF.cdf(((bms / ems) * (1 - rho)) / (1 + (k - 1) * rho), n - 1, (n - 1) * (k - 1));
    expect(tail(ci.lower)).toBeCloseTo(0.05, 6);
    expect(1 - tail(ci.upper)).toBeCloseTo(0.05, 6);
  });

  it("refuses a level outside (0, 1)", () => {
    expect(() => iccConfidenceInterval(SF, "ICC(2,1)", 1)).toThrow("level must be between 0 and 1");
  });
});

describe("plain labels (Koo & Li 2016)", () => {
  it.each([
    [0.3, "poor"],
    [0.5, "moderate"],
    [0.74, "moderate"],
    [0.75, "good"],
    [0.9, "good"],
    [0.91, "excellent"],
  ] as const)("ICC %d is %s", (icc, label) => {
    expect(reliabilityLabel(icc)).toBe(label);
  });
});

describe("reliable change index (Jacobson & Truax 1991)", () => {
  it("is the change over √2·SEM with a two-sided normal p-value", () => {
    // Worked by hand: SD 10, r = 0.8 → SEM = 10·√0.2 = 4.4721, SE of a difference 6.3246; change 15 → RCI 2.3717.
    const r = reliableChangeIndex(50, 65, 10, 0.8);
    expect(standardErrorOfMeasurement(10, 0.8)).toBeCloseTo(4.472136, 6);
    expect(r.rci).toBeCloseTo(2.371708, 6);
    expect(r.pValue).toBeCloseTo(0.0177, 4); // 2·(1 − Φ(2.3717)), normal table
    expect(Math.abs(reliableChangeIndex(50, 58.8, 10, 0.8).rci)).toBeLessThan(1.96);
  });
});

describe("multiplicity on the Benjamini & Hochberg (1995) worked example", () => {
  // Their 15 p-values (section 3.2): BH at q = 0.05 rejects 4; Bonferroni at 0.05 rejects 3.
  const P = [
    0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1,
  ];

  it("Benjamini–Hochberg rejects the 4 smallest", () => {
    const bh = benjaminiHochberg(P, 0.05);
    expect(bh.rejected.filter(Boolean).length).toBe(4);
    expect(bh.rejected.slice(0, 4)).toEqual([true, true, true, true]);
    // Adjusted p of the 4th: min over ranks ≥ 4 of p·m/rank = 0.0095·15/4 = 0.035625.
    expect(bh.adjusted[3]).toBeCloseTo(0.035625, 10);
  });

  it("Bonferroni rejects 3, and Holm (never fewer than Bonferroni) rejects 3 here", () => {
    expect(P.filter((p) => p <= 0.05 / P.length).length).toBe(3);
    const h = holm(P, 0.05);
    expect(h.rejected.filter(Boolean).length).toBe(3);
    expect(h.adjusted[0]).toBeCloseTo(0.0015, 12); // 0.0001 · 15
  });

  it("keeps the input order and refuses p-values outside [0, 1]", () => {
    const shuffled = [P[9], P[0], P[3], P[1], P[2]];
    expect(benjaminiHochberg(shuffled, 0.05).rejected).toEqual([false, true, true, true, true]);
    expect(() => holm([0.2, 1.2])).toThrow("p-value 2 must be in [0, 1]");
  });
});

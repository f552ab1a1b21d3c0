// Test–retest reliability (docs/methods.md): intraclass correlations from a two-way ANOVA table
// (Shrout & Fleiss 1979, Psychological Bulletin 86:420–428), and the standard error of measurement
// and minimal detectable change that turn a reliability into "is this change real?" (Weir 2005,
// J Strength Cond Res 19:231–240).

import { fQuantile, normalCdf, normalQuantile } from "./student-t";

export type IccForm = "ICC(1,1)" | "ICC(2,1)" | "ICC(3,1)" | "ICC(1,k)" | "ICC(2,k)" | "ICC(3,k)";

export const ICC_FORMS: readonly IccForm[] = ["ICC(1,1)", "ICC(2,1)", "ICC(3,1)", "ICC(1,k)", "ICC(2,k)", "ICC(3,k)"];

/** Mean squares of the subjects × raters table, named as in Shrout & Fleiss (1979), Table 2. */
export interface IccMeanSquares {
  subjects: number; // n
  raters: number; // k
  /** Between-subjects ("targets") mean square, df n − 1. */
  bms: number;
  /** Within-subject mean square, df n(k − 1) — one-way model. */
  wms: number;
  /** Between-raters ("judges") mean square, df k − 1. */
  jms: number;
  /** Residual mean square, df (n − 1)(k − 1). */
  ems: number;
}

/** Validates a complete subjects × raters matrix; no missing cells (the ANOVA needs a full table). */
function checkRatings(ratings: number[][]): { n: number; k: number } {
  if (!Array.isArray(ratings) || ratings.length < 2) {
    throw new RangeError(`ratings need at least 2 subjects (rows); got ${Array.isArray(ratings) ? ratings.length : 0}`);
  }
  const k = Array.isArray(ratings[0]) ? ratings[0].length : 0;
  if (k < 2) throw new RangeError(`ratings need at least 2 raters or sessions (columns); got ${k}`);
  ratings.forEach((row, i) => {
    if (!Array.isArray(row) || row.length !== k) {
      throw new RangeError(
        `ratings row ${i} has ${Array.isArray(row) ? row.length : 0} values, expected ${k} (the matrix must be complete)`,
      );
    }
    row.forEach((v, j) => {
      if (typeof v !== "number" || !Number.isFinite(v)) {
        throw new RangeError(
          `ratings[${i}][${j}] is not a finite number (got ${String(v)}); missing values are not supported`,
        );
      }
    });
  });
  return { n: ratings.length, k };
}

export function iccMeanSquares(ratings: number[][]): IccMeanSquares {
  const { n, k } = checkRatings(ratings);
  let grand = 0;
  const rowMeans = new Array<number>(n).fill(0);
  const colMeans = new Array<number>(k).fill(0);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) {
      rowMeans[i] += ratings[i][j] / k;
      colMeans[j] += ratings[i][j] / n;
      grand += ratings[i][j] / (n * k);
    }
  }
  let ssTotal = 0;
  for (let i = 0; i < n; i++) for (let j = 0; j < k; j++) ssTotal += (ratings[i][j] - grand) ** 2;
  let ssRows = 0;
  for (const m of rowMeans) ssRows += k * (m - grand) ** 2;
  let ssCols = 0;
  for (const m of colMeans) ssCols += n * (m - grand) ** 2;
  const ssWithin = Math.max(0, ssTotal - ssRows);
  const ssError = Math.max(0, ssTotal - ssRows - ssCols);
  return {
    subjects: n,
    raters: k,
    bms: ssRows / (n - 1),
    wms: ssWithin / (n * (k - 1)),
    jms: ssCols / (k - 1),
    ems: ssError / ((n - 1) * (k - 1)),
  };
}

/**
 * Intraclass correlation of the given form. "k" forms are the reliability of the mean of all k
 * columns (Shrout & Fleiss write ICC(1,4) etc. for their 4 judges).
 * ICC(1,·): one-way random; ICC(2,·): two-way random, absolute agreement; ICC(3,·): two-way mixed, consistency.
 */
export function intraclassCorrelation(ratings: number[][], form: IccForm): number {
  const { subjects: n, raters: k, bms, wms, jms, ems } = iccMeanSquares(ratings);
  let numerator: number;
  let denominator: number;
  switch (form) {
    case "ICC(1,1)":
      numerator = bms - wms;
      denominator = bms + (k - 1) * wms;
      break;
    case "ICC(2,1)":
      numerator = bms - ems;
      denominator = bms + (k - 1) * ems + (k * (jms - ems)) / n;
      break;
    case "ICC(3,1)":
      numerator = bms - ems;
      denominator = bms + (k - 1) * ems;
      break;
    case "ICC(1,k)":
      numerator = bms - wms;
      denominator = bms;
      break;
    case "ICC(2,k)":
      numerator = bms - ems;
      denominator = bms + (jms - ems) / n;
      break;
    case "ICC(3,k)":
      numerator = bms - ems;
      denominator = bms;
      break;
    default:
      throw new RangeError(`unknown ICC form ${String(form)}; expected one of ${ICC_FORMS.join(", ")}`);
  }
  if (!(denominator !== 0)) {
    throw new RangeError(
      "ICC is undefined: subjects do not differ and there is no rating error (all mean squares are 0)",
    );
  }
  return numerator / denominator;
}

/** SEM = SD · √(1 − r): the typical error of a single measurement, in the measure's unit. */
export function standardErrorOfMeasurement(sd: number, reliability: number): number {
  if (typeof sd !== "number" || !Number.isFinite(sd) || sd < 0)
    throw new RangeError(`sd must be a finite number ≥ 0 (got ${String(sd)})`);
  if (typeof reliability !== "number" || !Number.isFinite(reliability) || reliability > 1) {
    throw new RangeError(`reliability must be a finite number ≤ 1 (got ${String(reliability)})`);
  }
  // A negative ICC (possible with ICC(1,·)) carries no usable reliability; treat as r = 0 would hide that.
  if (reliability < 0) throw new RangeError(`reliability ${reliability} is below 0; SEM is not meaningful`);
  return sd * Math.sqrt(1 - reliability);
}

/**
 * MDC = z · √2 · SEM: the smallest change between two measurements that exceeds measurement error
 * with the given two-sided confidence (z = 1.959963985 at 0.95). √2 because both measurements carry error.
 */
export function minimalDetectableChange(sem: number, confidence = 0.95): number {
  if (typeof sem !== "number" || !Number.isFinite(sem) || sem < 0)
    throw new RangeError(`sem must be a finite number ≥ 0 (got ${String(sem)})`);
  if (typeof confidence !== "number" || !(confidence > 0 && confidence < 1)) {
    throw new RangeError(`confidence must be between 0 and 1, exclusive (got ${String(confidence)})`);
  }
  return twoSidedZ(confidence) * Math.SQRT2 * sem;
}

/** Normal quantile for a two-sided interval: z with P(|Z| ≤ z) = confidence. */
export function twoSidedZ(confidence: number): number {
  return normalQuantile(1 - (1 - confidence) / 2);
}

export type SingleMeasureForm = "ICC(1,1)" | "ICC(2,1)" | "ICC(3,1)";

/**
 * Confidence interval of a single-measure ICC (McGraw & Wong 1996, Psychological Methods 1:30–46,
 * Table 7: cases 1, 2A and 3C). ICC(1,1) and ICC(3,1) invert an exact F test; ICC(2,1) (absolute agreement)
 * uses Satterthwaite's approximate degrees of freedom v for the combined denominator.
 */
export function iccConfidenceInterval(
  ratings: number[][],
  form: SingleMeasureForm,
  level = 0.95,
): { icc: number; lower: number; upper: number; level: number } {
  if (!(level > 0 && level < 1)) throw new RangeError(`level must be between 0 and 1, got ${level}`);
  const { subjects: n, raters: k, bms, wms, jms, ems } = iccMeanSquares(ratings);
  const icc = intraclassCorrelation(ratings, form);
  const p = 1 - (1 - level) / 2;
  const fromF = (fl: number, fu: number) => ({ lower: (fl - 1) / (fl + k - 1), upper: (fu - 1) / (fu + k - 1) });
  if (form === "ICC(1,1)") {
    const f = bms / wms;
    const df2 = n * (k - 1);
    return { icc, level, ...fromF(f / fQuantile(p, n - 1, df2), f * fQuantile(p, df2, n - 1)) };
  }
  const dfE = (n - 1) * (k - 1);
  if (form === "ICC(3,1)") {
    const f = bms / ems;
    return { icc, level, ...fromF(f / fQuantile(p, n - 1, dfE), f * fQuantile(p, dfE, n - 1)) };
  }
  if (form !== "ICC(2,1)") throw new RangeError(`unknown single-measure ICC form ${String(form)}`);
  const a = (k * icc) / (n * (1 - icc));
  const b = 1 + (k * icc * (n - 1)) / (n * (1 - icc));
  const v = (a * jms + b * ems) ** 2 / ((a * jms) ** 2 / (k - 1) + (b * ems) ** 2 / dfE);
  const fStar = fQuantile(p, n - 1, v);
  const fStarLow = fQuantile(p, v, n - 1);
  const c = k * jms + (k * n - k - n) * ems;
  return {
    icc,
    level,
    lower: (n * (bms - fStar * ems)) / (fStar * c + n * bms),
    upper: (n * (fStarLow * bms - ems)) / (c + n * fStarLow * bms),
  };
}

export type ReliabilityLabel = "poor" | "moderate" | "good" | "excellent";

/** Koo & Li (2016, J Chiropr Med 15:155–163): < 0.5 poor, 0.5–0.75 moderate, 0.75–0.9 good, > 0.9 excellent. */
export function reliabilityLabel(icc: number): ReliabilityLabel {
  if (!Number.isFinite(icc)) throw new RangeError(`ICC must be a finite number, got ${icc}`);
  if (icc < 0.5) return "poor";
  if (icc < 0.75) return "moderate";
  if (icc <= 0.9) return "good";
  return "excellent";
}

/**
 * Reliable change index (Jacobson & Truax 1991, J Consult Clin Psychol 59:12–19): the change divided by the
 * standard error of a difference, √2·SEM, with its two-sided normal p-value.
 */
export function reliableChangeIndex(
  before: number,
  after: number,
  sd: number,
  reliability: number,
): { rci: number; pValue: number } {
  if (!Number.isFinite(before) || !Number.isFinite(after)) throw new RangeError("both values must be finite numbers");
  const seDifference = Math.SQRT2 * standardErrorOfMeasurement(sd, reliability);
  if (!(seDifference > 0)) throw new RangeError("the standard error of a difference is 0; the change cannot be judged");
  const rci = (after - before) / seDifference;
  return { rci, pValue: 2 * (1 - normalCdf(Math.abs(rci))) };
}

// Typed doorway to jStat's distribution functions. jstat ships no type declarations, so the
// import is untyped here once and every other module in the core sees plain typed functions.
// @ts-expect-error -- no declaration file for "jstat"
import jStatLib from "jstat";

interface JStatLike {
  studentt: { inv(p: number, df: number): number; cdf(x: number, df: number): number };
  normal: { inv(p: number, mean: number, sd: number): number; cdf(x: number, mean: number, sd: number): number };
  centralF: { inv(p: number, df1: number, df2: number): number };
}

const jStat = jStatLib as unknown as JStatLike;

/** Quantile of Student's t with `df` degrees of freedom (df may be non-integer, e.g. under ridge). */
export function studentTQuantile(probability: number, df: number): number {
  if (!(probability > 0 && probability < 1)) throw new RangeError(`probability must be in (0, 1), got ${probability}`);
  if (!(df > 0)) throw new RangeError(`degrees of freedom must be > 0, got ${df}`);
  return jStat.studentt.inv(probability, df);
}

/** Cumulative distribution of Student's t. */
export function studentTCdf(t: number, df: number): number {
  if (!(df > 0)) throw new RangeError(`degrees of freedom must be > 0, got ${df}`);
  return jStat.studentt.cdf(t, df);
}

/** Standard normal quantile. */
export function normalQuantile(probability: number): number {
  if (!(probability > 0 && probability < 1)) throw new RangeError(`probability must be in (0, 1), got ${probability}`);
  return jStat.normal.inv(probability, 0, 1);
}

/** Standard normal cumulative distribution. */
export function normalCdf(z: number): number {
  return jStat.normal.cdf(z, 0, 1);
}

/** Quantile of the F distribution with (df1, df2) degrees of freedom (df may be non-integer). */
export function fQuantile(probability: number, df1: number, df2: number): number {
  if (!(probability > 0 && probability < 1)) throw new RangeError(`probability must be in (0, 1), got ${probability}`);
  if (!(df1 > 0 && df2 > 0)) throw new RangeError(`degrees of freedom must be > 0, got ${df1} and ${df2}`);
  return jStat.centralF.inv(probability, df1, df2);
}

// Shares and medians for manager views: shown only for groups of at least the threshold.

import { median as medianOf } from "simple-statistics";
import { effectiveThreshold, isSmallCount } from "./threshold";

/**
 * numerator / denominator, or null when it would single people out. Hidden when the group has fewer
 * than `threshold` people, and also when the numerator or the rest of the group is 1 … threshold−1:
 * a share and its group size give the count back, so a share obeys the same rule as a table cell
 * (0 % and 100 % may show, as zero cells may).
 */
export function suppressedShare(numerator: number, denominator: number, threshold?: number): number | null {
  const t = effectiveThreshold(threshold);
  if (!Number.isInteger(numerator) || !Number.isInteger(denominator) || numerator < 0 || numerator > denominator) {
    throw new RangeError(`share needs whole counts 0 ≤ numerator ≤ denominator, got ${numerator}/${denominator}`);
  }
  if (denominator < t) return null;
  if (isSmallCount(numerator, t) || isSmallCount(denominator - numerator, t)) return null;
  return numerator / denominator;
}

/** Median of a group (mean of the two middle values for an even count), or null for a small group. */
export function protectMedian(values: readonly number[], threshold?: number): number | null;
/** The same rule for a median computed elsewhere: published only when `count` ≥ threshold. */
export function protectMedian(group: { count: number; median: number }, threshold?: number): number | null;
export function protectMedian(
  input: readonly number[] | { count: number; median: number },
  threshold?: number,
): number | null {
  const t = effectiveThreshold(threshold);
  if (Array.isArray(input)) {
    const values = input as readonly number[];
    if (values.some((v) => !Number.isFinite(v))) throw new RangeError("median needs finite values");
    if (values.length < t) return null;
    return medianOf([...values]);
  }
  const { count, median } = input as { count: number; median: number };
  if (!Number.isInteger(count) || count < 0) throw new RangeError(`group count must be a whole number, got ${count}`);
  return count >= t ? median : null;
}

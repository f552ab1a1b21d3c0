// The minimum group size below which a count, share or median is not shown.
// Five is common practice in health statistics (no single published source); an organisation may
// choose a larger value, never a smaller one.

export const MINIMUM_THRESHOLD = 5;

/**
 * The threshold actually applied. A value below 5 is RAISED to 5 (not refused), so a mistyped or
 * legacy organisation setting can never weaken protection; callers read the applied value back
 * from the result's `threshold`. Fractions are rounded up, because counts are whole people.
 */
export function effectiveThreshold(requested?: number): number {
  if (requested === undefined) return MINIMUM_THRESHOLD;
  if (typeof requested !== "number" || !Number.isFinite(requested)) {
    throw new RangeError(`disclosure threshold must be a finite number, got ${String(requested)}`);
  }
  return Math.max(MINIMUM_THRESHOLD, Math.ceil(requested));
}

/** A count of 1 … threshold−1 people must not be published; zero may show. */
export function isSmallCount(count: number, threshold: number): boolean {
  return count > 0 && count < threshold;
}

// Input checks shared by the baseline measures. Every measure refuses bad input loudly with a
// RangeError instead of returning a number that looks valid but is not.

/** Throws unless every value is a finite number. `name` is used in the message. */
export function assertFiniteSeries(values: readonly number[], name: string): void {
  if (!Array.isArray(values)) throw new RangeError(`${name} must be an array of numbers`);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (typeof v !== "number" || !Number.isFinite(v)) {
      throw new RangeError(`${name}[${i}] is not a finite number (got ${String(v)})`);
    }
  }
}

/** Throws unless both series have the same length. */
export function assertSameLength(a: readonly number[], b: readonly number[], nameA: string, nameB: string): void {
  if (a.length !== b.length) {
    throw new RangeError(`${nameA} and ${nameB} must have the same length (got ${a.length} and ${b.length})`);
  }
}

/** Throws unless the series has at least `minimum` values. */
export function assertMinimumLength(values: readonly unknown[], minimum: number, name: string): void {
  if (values.length < minimum) {
    throw new RangeError(`${name} needs at least ${minimum} values (got ${values.length})`);
  }
}

/** Throws unless the sample rate is a finite positive number. */
export function assertSampleRate(sampleRateHz: number): void {
  if (typeof sampleRateHz !== "number" || !Number.isFinite(sampleRateHz) || sampleRateHz <= 0) {
    throw new RangeError(`sampleRateHz must be a finite number above 0 (got ${String(sampleRateHz)})`);
  }
}

/** Arithmetic mean; callers have already checked the series is non-empty and finite. */
export function mean(values: ArrayLike<number>): number {
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += values[i];
  return sum / values.length;
}

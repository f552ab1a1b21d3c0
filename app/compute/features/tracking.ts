// Foot (or hand) tracking: how far and how late the cursor follows a moving target.
import { assertFiniteSeries, assertMinimumLength, assertSameLength, assertSampleRate, mean } from "./input-checks";

export interface TrackingError {
  /** Root-mean-square of cursor − target, in the positions' unit. */
  rmse: number;
  /** Delay at the cross-correlation peak (s); positive = cursor behind the target. */
  lagSeconds: number;
}

/** The lag search covers ±1 s: human tracking delays are a few hundred ms (common practice). */
const MAX_LAG_SECONDS = 1;
/** Fewest overlapping samples for which a correlation is still computed at a lag. */
const MIN_OVERLAP = 3;

export function trackingError(target: number[], cursor: number[], sampleRateHz: number): TrackingError {
  assertSameLength(target, cursor, "target", "cursor");
  assertMinimumLength(target, MIN_OVERLAP, "tracking trace");
  assertFiniteSeries(target, "target");
  assertFiniteSeries(cursor, "cursor");
  assertSampleRate(sampleRateHz);
  const n = target.length;

  let squaredError = 0;
  for (let i = 0; i < n; i++) squaredError += (cursor[i] - target[i]) ** 2;
  const rmse = Math.sqrt(squaredError / n);

  // Centre both series on their overall means so prefix sums of squares keep their digits.
  const mt = mean(target);
  const mc = mean(cursor);
  const a = Float64Array.from(target, (v) => v - mt);
  const b = Float64Array.from(cursor, (v) => v - mc);
  if (a.every((v) => v === 0)) throw new RangeError("target does not move, so a tracking lag is undefined");
  if (b.every((v) => v === 0)) throw new RangeError("cursor does not move, so a tracking lag is undefined");

  // Prefix sums give each lag's overlap means and variances in O(1); only the cross term is O(n).
  const prefix = (s: Float64Array, square: boolean) => {
    const p = new Float64Array(n + 1);
    for (let i = 0; i < n; i++) p[i + 1] = p[i] + (square ? s[i] * s[i] : s[i]);
    return p;
  };
  const pa = prefix(a, false);
  const paa = prefix(a, true);
  const pb = prefix(b, false);
  const pbb = prefix(b, true);

  const maxLag = Math.min(Math.round(MAX_LAG_SECONDS * sampleRateHz), n - MIN_OVERLAP);
  let bestLag = 0;
  let bestCorrelation = -Infinity;
  // Search outward from 0 (0, +1, −1, +2, …) so a tie goes to the smallest delay.
  for (let step = 0; step <= 2 * maxLag; step++) {
    const lag = step === 0 ? 0 : step % 2 === 1 ? (step + 1) / 2 : -step / 2;
    // Pairs target[i] with cursor[i + lag]: a cursor that repeats the target `lag` samples later peaks here.
    const start = Math.max(0, -lag);
    const end = Math.min(n, n - lag);
    const m = end - start;
    let sab = 0;
    for (let i = start; i < end; i++) sab += a[i] * b[i + lag];
    const sa = pa[end] - pa[start];
    const saa = paa[end] - paa[start];
    const sb = pb[end + lag] - pb[start + lag];
    const sbb = pbb[end + lag] - pbb[start + lag];
    const cov = sab - (sa * sb) / m;
    const va = saa - (sa * sa) / m;
    const vb = sbb - (sb * sb) / m;
    if (!(va > 0) || !(vb > 0)) continue; // flat overlap: correlation undefined at this lag
    const r = cov / Math.sqrt(va * vb);
    if (r > bestCorrelation) {
      bestCorrelation = r;
      bestLag = lag;
    }
  }
  return { rmse, lagSeconds: bestLag / sampleRateHz };
}

// Every centre-of-pressure (CoP) trace is processed the same way before its sway measures are computed, so that
// recordings made at different rates and of different lengths are measured alike (Prieto et al. 1996, IEEE Trans
// Biomed Eng 43:956–966, define the measures on such a common series). The steps and their settings are
// SWAY_PROCESSING; docs/methods.md gives the reasons.
import fili from "fili";
import { assertFiniteSeries, assertSameLength, assertSampleRate } from "./input-checks";

export const SWAY_PROCESSING = {
  /** Every trace is resampled to this rate (common practice for quiet-standing CoP). */
  resampledRateHz: 100,
  /** Low-pass cut-off (common practice; CoP sway power lies far below it). */
  cutoffHz: 10,
  /** How the low-pass is made, as stored with each trace. */
  filter: "Butterworth low-pass, 2nd order, run forward and backward (zero-lag, 4th order overall)",
  /** Shortest accepted trial, from the first to the last timestamp. */
  minDurationSeconds: 20,
  /** Slowest accepted recording: the cut-off must sit well below half the rate (here at most 0.4 of the rate). */
  minRecordedRateHz: 25,
} as const;

/** What was done to one trace, stored with it. */
export interface SwayProcessing {
  recordedRateHz: number;
  resampledRateHz: number;
  filter: string;
  cutoffHz: number;
  /** First to last timestamp of the recording (s). */
  durationSeconds: number;
}

export interface ProcessedSway {
  x: number[];
  y: number[];
  sampleRateHz: number;
  processing: SwayProcessing;
}

/**
 * Zero-lag low-pass: a 2nd-order Butterworth section (fili, bilinear design, −3 dB at the cut-off) run forward,
 * then backward over the result. The two passes cancel each other's phase and square the magnitude, so the
 * whole is a 4th-order zero-lag filter with |H(fc)| = 1/2 (−6 dB). Both ends are extended by an odd reflection
 * of up to one second, which keeps the start-up of each pass out of the returned samples.
 */
export function lowPassZeroLag(values: readonly number[], sampleRateHz: number, cutoffHz: number): number[] {
  assertFiniteSeries(values, "values");
  assertSampleRate(sampleRateHz);
  if (!(cutoffHz > 0 && cutoffHz < sampleRateHz / 2))
    throw new RangeError(
      `cut-off ${cutoffHz} Hz must be above 0 and below half the sample rate (${sampleRateHz / 2} Hz)`,
    );
  const n = values.length;
  if (n < 2) throw new RangeError(`a filtered series needs at least 2 values (got ${n})`);
  const pad = Math.min(n - 1, Math.ceil(sampleRateHz));
  const first = values[0];
  const last = values[n - 1];
  const extended: number[] = new Array(n + 2 * pad);
  for (let i = 0; i < pad; i++) extended[i] = 2 * first - values[pad - i];
  for (let i = 0; i < n; i++) extended[pad + i] = values[i];
  for (let i = 0; i < pad; i++) extended[pad + n + i] = 2 * last - values[n - 2 - i];
  // Each pass starts from rest; starting near 0 keeps its transient small as well as outside the result.
  const offset = extended[0];
  for (let i = 0; i < extended.length; i++) extended[i] -= offset;
  const forward = butterworthSection(sampleRateHz, cutoffHz).multiStep(extended);
  forward.reverse();
  const backward = butterworthSection(sampleRateHz, cutoffHz).multiStep(forward);
  backward.reverse();
  return backward.slice(pad, pad + n).map((v) => v + offset);
}

/** A fresh filter each time: fili keeps its state between calls. */
function butterworthSection(sampleRateHz: number, cutoffHz: number) {
  const coefficients = new fili.CalcCascades().lowpass({
    order: 1, // fili counts 2nd-order sections: one section is a 2nd-order Butterworth
    characteristic: "butterworth",
    Fs: sampleRateHz,
    Fc: cutoffHz,
  });
  return new fili.IirFilter(coefficients);
}

/**
 * Linear interpolation of series sampled at times `t` (increasing) onto t[0] + k/rate, k = 0, 1, … up to the
 * last time. Linear interpolation is exact for straight lines and never overshoots the samples.
 */
export function resampleLinear(
  t: readonly number[],
  series: readonly (readonly number[])[],
  rateHz: number,
): { t: number[]; series: number[][] } {
  assertFiniteSeries(t, "t");
  assertSampleRate(rateHz);
  if (t.length < 2) throw new RangeError(`resampling needs at least 2 samples (got ${t.length})`);
  for (let i = 1; i < t.length; i++)
    if (!(t[i] > t[i - 1])) throw new RangeError(`t must increase (t[${i}] = ${t[i]} after ${t[i - 1]})`);
  series.forEach((s, j) => {
    assertSameLength(t, s, "t", `series ${j}`);
    assertFiniteSeries(s, `series ${j}`);
  });
  const t0 = t[0];
  const end = t[t.length - 1];
  // The small allowance keeps a last sample that lands on the grid despite rounding in the timestamps.
  const steps = Math.floor((end - t0) * rateHz + 1e-6);
  const grid: number[] = new Array(steps + 1);
  const out = series.map(() => new Array<number>(steps + 1));
  let j = 0;
  for (let k = 0; k <= steps; k++) {
    const tk = Math.min(t0 + k / rateHz, end);
    grid[k] = tk;
    while (j < t.length - 2 && t[j + 1] < tk) j++;
    const w = (tk - t[j]) / (t[j + 1] - t[j]);
    series.forEach((s, m) => {
      out[m][k] = s[j] + w * (s[j + 1] - s[j]);
    });
  }
  return { t: grid, series: out };
}

/**
 * The common processing of a CoP trace: low-pass at the recorded rate (which also keeps content above the new
 * Nyquist frequency from folding back when the rate is lowered), then resampling to SWAY_PROCESSING's rate.
 * Refuses a trial shorter than the minimum or recorded too slowly for the cut-off.
 */
export function processSwayTrace(
  t: readonly number[],
  x: readonly number[],
  y: readonly number[],
  recordedRateHz: number,
): ProcessedSway {
  assertSameLength(t, x, "t", "x");
  assertSameLength(t, y, "t", "y");
  assertSampleRate(recordedRateHz);
  const p = SWAY_PROCESSING;
  const durationSeconds = t.length > 1 ? t[t.length - 1] - t[0] : 0;
  if (!(durationSeconds >= p.minDurationSeconds))
    throw new RangeError(`a sway trace must last at least ${p.minDurationSeconds} s (got ${durationSeconds} s)`);
  if (!(recordedRateHz >= p.minRecordedRateHz))
    throw new RangeError(
      `a sway trace must be recorded at ${p.minRecordedRateHz} Hz or more (got ${recordedRateHz} Hz)`,
    );
  const fx = lowPassZeroLag(x, recordedRateHz, p.cutoffHz);
  const fy = lowPassZeroLag(y, recordedRateHz, p.cutoffHz);
  const r = resampleLinear(t, [fx, fy], p.resampledRateHz);
  return {
    x: r.series[0],
    y: r.series[1],
    sampleRateHz: p.resampledRateHz,
    processing: {
      recordedRateHz,
      resampledRateHz: p.resampledRateHz,
      filter: p.filter,
      cutoffHz: p.cutoffHz,
      durationSeconds,
    },
  };
}

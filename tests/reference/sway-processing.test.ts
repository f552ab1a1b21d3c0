// The common processing of centre-of-pressure traces (low-pass, resampling, minimum duration) checked against
// textbook filter responses, the linear-interpolation error bound and closed-form path lengths.

import { describe, expect, it } from "vitest";
import { swayMetrics } from "~/compute/features";
import { lowPassZeroLag, processSwayTrace, resampleLinear, SWAY_PROCESSING } from "~/compute/features/sway-processing";

/**
 * Amplitude and phase of the component at frequency f in v[from..to), by least squares on sin and cos over a
 * whole number of periods (the discrete Fourier coefficient at f).
 */
function sineComponent(v: number[], f: number, fs: number, from: number, to: number) {
  let s = 0;
  let c = 0;
  for (let i = from; i < to; i++) {
    s += v[i] * Math.sin((2 * Math.PI * f * i) / fs);
    c += v[i] * Math.cos((2 * Math.PI * f * i) / fs);
  }
  const n = to - from;
  return { amplitude: (2 * Math.hypot(s, c)) / n, phase: Math.atan2(c, s) };
}
const sine = (n: number, f: number, fs: number, amplitude: number, offset = 0, phase = 0) =>
  Array.from({ length: n }, (_, i) => offset + amplitude * Math.sin((2 * Math.PI * f * i) / fs + phase));
const dB = (ratio: number) => 20 * Math.log10(ratio);

describe("lowPassZeroLag: 2nd-order Butterworth run forward and backward (4th-order zero-lag)", () => {
  const fc = SWAY_PROCESSING.cutoffHz;

  it("is −6.02 dB at the cut-off at every rate: −3 dB per pass, squared by the second pass", () => {
    // Winter, Biomechanics and Motor Control of Human Movement (4th ed., 2009), on digital filtering: a Butterworth low-pass is
    // −3 dB (|H| = 1/√2) at its cut-off; passing the data twice gives |H|² = 1/2, i.e. 20·log10(0.5) = −6.02 dB.
    for (const fs of [25, 60, 100, 1000]) {
      const n = 20 * fs;
      const out = lowPassZeroLag(sine(n, fc, fs, 3, 200), fs, fc);
      const mid = sineComponent(
        out.map((v) => v - 200),
        fc,
        fs,
        2 * fs,
        n - 2 * fs,
      );
      expect(dB(mid.amplitude / 3), `${fs} Hz`).toBeCloseTo(dB(0.5), 4);
    }
  });

  it("follows the exact response of the bilinear-transformed Butterworth, squared", () => {
    // Oppenheim & Schafer, Discrete-Time Signal Processing (3rd ed.), bilinear transformation: a 2nd-order Butterworth designed
    // by the bilinear transform with the cut-off pre-warped has |H(f)|² = 1 / (1 + (tan(πf/fs) / tan(πfc/fs))⁴);
    // forward and backward, the magnitude is that |H|².
    const fs = 100;
    const n = 40 * fs;
    for (const f of [2, 5, 10, 15, 20, 30]) {
      const ratio = Math.tan((Math.PI * f) / fs) / Math.tan((Math.PI * fc) / fs);
      const expected = 1 / (1 + ratio ** 4);
      const out = lowPassZeroLag(sine(n, f, fs, 1), fs, fc);
      const mid = sineComponent(out, f, fs, 5 * fs, n - 5 * fs);
      expect(mid.amplitude / expected, `${f} Hz`).toBeCloseTo(1, 6);
    }
  });

  it("shifts no phase: a sine at the cut-off and one below come out in phase", () => {
    // Forward-backward filtering has zero phase (Winter 2009; Oppenheim & Schafer on zero-phase filtering); a single forward pass would lag by 90° at the cut-off.
    const fs = 100;
    const n = 20 * fs;
    for (const f of [3, fc]) {
      const input = sine(n, f, fs, 2, 0, 0.7);
      const out = lowPassZeroLag(input, fs, fc);
      const a = sineComponent(input, f, fs, 2 * fs, n - 2 * fs);
      const b = sineComponent(out, f, fs, 2 * fs, n - 2 * fs);
      expect(Math.abs(b.phase - a.phase), `${f} Hz`).toBeLessThan(1e-6);
    }
  });

  it("passes a sine well below the cut-off unchanged", () => {
    // At 1 Hz the attenuation is 1 − 1/(1 + 0.1⁴) ≈ 1e-4 (the response above): 3 mm comes out within 0.0003 mm
    // away from the ends; the reflected ends keep even the first and last samples within 0.1 %.
    for (const fs of [25, 100, 1000]) {
      const n = 20 * fs;
      const input = sine(n, 1, fs, 3, 200, 0.3);
      const out = lowPassZeroLag(input, fs, fc);
      let inner = 0;
      let all = 0;
      for (let i = 0; i < n; i++) {
        const d = Math.abs(out[i] - input[i]);
        all = Math.max(all, d);
        if (i >= fs && i < n - fs) inner = Math.max(inner, d);
      }
      expect(inner, `${fs} Hz inner`).toBeLessThan(3 * 1.1e-4);
      expect(all, `${fs} Hz ends`).toBeLessThan(3 * 1e-3);
    }
  });

  it("refuses a cut-off at or above half the rate, and non-finite values", () => {
    expect(() => lowPassZeroLag([1, 2, 3], 20, 10)).toThrow(/below half the sample rate \(10 Hz\)/);
    expect(() => lowPassZeroLag([1, Number.NaN, 3], 100, 10)).toThrow(/values\[1\]/);
  });
});

describe("resampleLinear", () => {
  it("reproduces a straight line exactly on the new grid, from the first timestamp", () => {
    // Linear interpolation is exact for polynomials of degree 1 (Lagrange remainder is 0).
    const t = Array.from({ length: 21 * 30 + 1 }, (_, i) => 5 + i / 30);
    const v = t.map((s) => 2 + 0.5 * s);
    const r = resampleLinear(t, [v], 100);
    expect(r.t).toHaveLength(2101);
    expect(r.t[0]).toBe(5);
    expect(r.t[2100]).toBeCloseTo(26, 12);
    r.t.forEach((s, k) => {
      expect(s).toBeCloseTo(5 + k / 100, 12);
      expect(r.series[0][k]).toBeCloseTo(2 + 0.5 * s, 12);
    });
  });

  it("keeps a smooth signal within the linear-interpolation error bound h²/8 · max|f″|", () => {
    // Burden & Faires, Numerical Analysis, Lagrange interpolation remainder for n = 1: |f − p| ≤ h²/8 · max|f″| between two samples.
    const fs = 37;
    const f = 0.3;
    const A = 4;
    const t = Array.from({ length: 25 * fs }, (_, i) => i / fs);
    const r = resampleLinear(t, [t.map((s) => A * Math.sin(2 * Math.PI * f * s))], 100);
    const bound = ((1 / fs) ** 2 / 8) * A * (2 * Math.PI * f) ** 2;
    let worst = 0;
    r.t.forEach((s, k) => {
      worst = Math.max(worst, Math.abs(r.series[0][k] - A * Math.sin(2 * Math.PI * f * s)));
    });
    expect(worst).toBeLessThanOrEqual(bound);
    expect(worst).toBeGreaterThan(bound / 4); // the bound is nearly reached: this really interpolated
  });

  it("refuses times that do not increase", () => {
    expect(() => resampleLinear([0, 1, 1], [[1, 2, 3]], 100)).toThrow(/t must increase/);
  });
});

describe("processSwayTrace: one measure whatever the recording rate", () => {
  // A circle of radius r traced at 0.25 Hz for 24 s (6 revolutions). Its path length is 2πr per revolution
  // (circumference); a polygon of N chords per revolution is 2Nr·sin(π/N), within 0.02 % of it at N = 100.
  const r = 5;
  const f0 = 0.25;
  const seconds = 24;
  const circle = (fs: number, tremorMm = 0) => {
    const t = Array.from({ length: seconds * fs + 1 }, (_, i) => i / fs);
    return {
      t,
      // A 40 Hz tremor (as from a vibrating platform) on x, far above the cut-off.
      x: t.map((s) => 120 + r * Math.cos(2 * Math.PI * f0 * s) + tremorMm * Math.sin(2 * Math.PI * 40 * s)),
      y: t.map((s) => -35 + r * Math.sin(2 * Math.PI * f0 * s)),
    };
  };
  const perRevolution = (pathLength: number) => pathLength / (seconds * f0);

  it("gives 2πr per revolution of a circle recorded at 25 to 1,000 Hz", () => {
    const measured = [25, 50, 60, 100, 200, 1000].map((fs) => {
      const c = circle(fs);
      const p = processSwayTrace(c.t, c.x, c.y, fs);
      expect(p.sampleRateHz).toBe(100);
      expect(p.x).toHaveLength(seconds * 100 + 1);
      expect(p.processing).toEqual({
        recordedRateHz: fs,
        resampledRateHz: 100,
        filter: SWAY_PROCESSING.filter,
        cutoffHz: 10,
        durationSeconds: seconds,
      });
      const m = swayMetrics(p.x, p.y, p.sampleRateHz);
      expect(perRevolution(m.pathLength) / (2 * Math.PI * r), `${fs} Hz`).toBeCloseTo(1, 3);
      expect(m.rmsDistance, `${fs} Hz`).toBeCloseTo(r, 2);
      return m.meanVelocity;
    });
    // Mean velocity 2πr·f0 = 7.854 mm/s at every rate, within 0.05 % of each other.
    for (const v of measured) expect(v / measured[measured.length - 1]).toBeCloseTo(1, 3);
  });

  it("makes two recording rates agree where the raw traces do not (content above the cut-off)", () => {
    const at200 = circle(200, 0.1);
    const at1000 = circle(1000, 0.1);
    const raw200 = swayMetrics(at200.x, at200.y, 200).pathLength;
    const raw1000 = swayMetrics(at1000.x, at1000.y, 1000).pathLength;
    // Raw, the tremor inflates the path by more than half and by a different amount at each rate.
    for (const raw of [raw200, raw1000]) expect(perRevolution(raw) / (2 * Math.PI * r)).toBeGreaterThan(1.5);
    expect(Math.abs(raw1000 / raw200 - 1)).toBeGreaterThan(0.04);
    const p200 = processSwayTrace(at200.t, at200.x, at200.y, 200);
    const p1000 = processSwayTrace(at1000.t, at1000.x, at1000.y, 1000);
    const m200 = swayMetrics(p200.x, p200.y, 100).pathLength;
    const m1000 = swayMetrics(p1000.x, p1000.y, 100).pathLength;
    expect(m1000 / m200).toBeCloseTo(1, 4);
    expect(perRevolution(m1000) / (2 * Math.PI * r)).toBeCloseTo(1, 3);
  });

  it("refuses a trial shorter than the minimum and a recording too slow for the cut-off", () => {
    const short = Array.from({ length: 1999 }, (_, i) => i / 100); // 19.98 s
    expect(() => processSwayTrace(short, short, short, 100)).toThrow(/at least 20 s \(got 19.98 s\)/);
    const slow = Array.from({ length: 601 }, (_, i) => i / 20); // 30 s at 20 Hz
    expect(() => processSwayTrace(slow, slow, slow, 20)).toThrow(/25 Hz or more \(got 20 Hz\)/);
  });
});

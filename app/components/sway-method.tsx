import type { SwayProcessing } from "~/compute/features/sway-processing";
import { SWAY_PROCESSING } from "~/compute/features/sway-processing";

// Sway measures: what was done to a centre-of-pressure trace before its measures, in plain words, with sources.

/** One stored trace's processing in a line, e.g. "recorded 1,000 Hz → 100 Hz, low-pass 10 Hz, 30.0 s". */
export function processingLine(p: SwayProcessing): string {
  return `recorded at ${p.recordedRateHz.toPrecision(4)} Hz, resampled to ${p.resampledRateHz} Hz, low-pass ${p.cutoffHz} Hz (${p.filter}), ${p.durationSeconds.toFixed(1)} s`;
}

export function SwayMethod() {
  const p = SWAY_PROCESSING;
  return (
    <details className="card" data-testid="sway-how-computed">
      <summary className="cursor-pointer font-semibold">How the sway measures were computed</summary>
      <div className="mt-2 grid gap-2 text-sm">
        <p>
          Every centre-of-pressure trace is processed the same way before it is measured, so recordings made at
          different rates compare: it is low-pass filtered at its recorded rate with a {p.filter}, cut-off {p.cutoffHz}{" "}
          Hz (common practice), then resampled to {p.resampledRateHz} Hz by linear interpolation. Trials shorter than{" "}
          {p.minDurationSeconds} s, or recorded at under {p.minRecordedRateHz} Hz, are refused. Each stored trace lists
          the processing it went through.
        </p>
        <p>
          Path length: the sum of the distances between successive samples. Mean velocity: path length divided by the
          trial's duration. RMS distance: from the mean centre of pressure. These follow Prieto et al. (1996), IEEE
          Transactions on Biomedical Engineering 43:956–966. 95 % prediction-ellipse area: π · 5.991 · √(λ₁λ₂) with λ
          the eigenvalues of the sample covariance (Schubert &amp; Kirchner 2014, Gait &amp; Posture 39:518–522). Path
          length grows with the trial's length; mean velocity does not.
        </p>
      </div>
    </details>
  );
}

// Which way is "better" for each baseline output, and z-scores turned so that positive = better.
// Keys are the flat keys `computeTrace` returns (trace-parsing.ts), so a stored measure finds its direction.

export interface MeasureDirection {
  label: string;
  unit: string;
  /** null: descriptive output with no better/worse direction; do not z-score it. */
  higherIsBetter: boolean | null;
  note?: string;
}

export const MEASURE_DIRECTIONS = {
  "sway.pathLength": { label: "Sway path length", unit: "mm", higherIsBetter: false },
  "sway.meanVelocity": { label: "Sway mean velocity", unit: "mm/s", higherIsBetter: false },
  "sway.rmsDistance": { label: "Sway RMS distance", unit: "mm", higherIsBetter: false },
  "sway.ellipseArea95": { label: "Sway 95 % prediction-ellipse area", unit: "mm²", higherIsBetter: false },
  "tracking.rmse": { label: "Tracking RMSE", unit: "position unit of the trace", higherIsBetter: false },
  "tracking.lagSeconds": {
    label: "Tracking lag",
    unit: "s",
    higherIsBetter: null,
    note: "positive = cursor behind the target, negative = ahead of it (anticipation, rare and worth a look); neither direction is better, so score tracking.lagMagnitudeSeconds instead",
  },
  "tracking.lagMagnitudeSeconds": {
    label: "Tracking lag size |lag|",
    unit: "s",
    higherIsBetter: false,
    note: "how far the cursor is behind or ahead of the target; anticipation counts like delay",
  },
  "hand.pc1Ratio": {
    label: "Hand: variance share of the first component",
    unit: "ratio",
    higherIsBetter: false,
    note: "a lower share means more independent finger movement (common practice reading)",
  },
  "hand.componentsToThreshold": {
    label: "Hand: components to reach the variance threshold",
    unit: "count",
    higherIsBetter: true,
    note: "more components = more independent movement patterns (common practice reading)",
  },
  "hand.participationRatio": {
    label: "Hand: participation ratio",
    unit: "effective components",
    higherIsBetter: true,
    note: "more effective components = more independent movement patterns (common practice reading)",
  },
  "hand.joints": { label: "Hand: joint channels recorded", unit: "count", higherIsBetter: null },
  "timing.meanAbsoluteAsynchronyMs": { label: "Timing: mean absolute asynchrony", unit: "ms", higherIsBetter: false },
  "timing.sdAsynchronyMs": { label: "Timing: SD of asynchrony", unit: "ms", higherIsBetter: false },
  "timing.interOnsetCv": { label: "Timing: inter-onset interval CV", unit: "ratio", higherIsBetter: false },
  "timing.missed": { label: "Timing: missed cues", unit: "count", higherIsBetter: false },
  "timing.cues": { label: "Timing: cues presented", unit: "count", higherIsBetter: null },
  "force.rmse": { label: "Force grading RMSE", unit: "force unit of the trace", higherIsBetter: false },
  "force.slope": {
    label: "Force grading slope",
    unit: "produced per target",
    higherIsBetter: null,
    note: "ideal is 1; score force.slopeDeviation instead",
  },
  "force.slopeDeviation": { label: "Force grading slope deviation |slope − 1|", unit: "ratio", higherIsBetter: false },
  "force.rSquared": { label: "Force grading R²", unit: "ratio", higherIsBetter: true },
} as const satisfies Record<string, MeasureDirection>;

export type MeasureKey = keyof typeof MEASURE_DIRECTIONS;

/** z = (value − mean)/sd, negated when lower is better, so that positive always means better. */
export function zScore(value: number, mean: number, sd: number, higherIsBetter: boolean): number {
  for (const [name, v] of [
    ["value", value],
    ["mean", mean],
    ["sd", sd],
  ] as const) {
    if (typeof v !== "number" || !Number.isFinite(v))
      throw new RangeError(`${name} must be a finite number (got ${String(v)})`);
  }
  if (!(sd > 0)) throw new RangeError(`sd must be above 0 (got ${sd})`);
  const z = (value - mean) / sd;
  const turned = higherIsBetter ? z : -z;
  return turned === 0 ? 0 : turned; // no −0 in stored scores
}

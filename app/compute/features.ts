// Baseline measures (docs/methods.md). The contract lives here; each measure sits in its own file under ./features/.

export { MEASURE_DIRECTIONS, type MeasureDirection, type MeasureKey, zScore } from "./features/directions";
export { type ForceGrading, forceGrading } from "./features/force-grading";
export { type HandDimensionality, handDimensionality } from "./features/hand-dimensionality";
export { CHI_SQUARE_95_2DF, type SwayMetrics, swayMetrics } from "./features/sway";
export { type CueMatch, matchCuesToOnsets, type TimingMetrics, timingMetrics } from "./features/timing";
export { type TrackingError, trackingError } from "./features/tracking";

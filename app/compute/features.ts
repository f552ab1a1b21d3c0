// Baseline measures (DESIGN §3.1). The contract lives here; each measure sits in its own file under ./features/.
export { swayMetrics, CHI_SQUARE_95_2DF, type SwayMetrics } from "./features/sway";
export { trackingError, type TrackingError } from "./features/tracking";
export { handDimensionality, type HandDimensionality } from "./features/hand-dimensionality";
export { timingMetrics, matchCuesToOnsets, type TimingMetrics, type CueMatch } from "./features/timing";
export { forceGrading, type ForceGrading } from "./features/force-grading";
export { MEASURE_DIRECTIONS, zScore, type MeasureDirection, type MeasureKey } from "./features/directions";

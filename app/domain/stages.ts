// Readiness stages of a worker, in order, with the words people read (docs/consent-and-disclosure.md).
export const STAGES = [
  "invited",
  "consented",
  "baselined",
  "forecast",
  "planned",
  "training",
  "proficient",
  "paused",
  "withdrawn",
] as const;
export type Stage = (typeof STAGES)[number];
export const STAGE_LABELS: Record<Stage, string> = {
  invited: "Invited",
  consented: "Consented",
  baselined: "Baseline recorded",
  forecast: "Forecast ready",
  planned: "In a plan",
  training: "Training",
  proficient: "Proficient",
  paused: "Paused",
  withdrawn: "Withdrawn",
};

/** Coarser stage bands, for tables where single stages would have to be hidden too often. */
export const STAGE_BANDS = ["notStarted", "inTraining", "ready", "pausedOrStopped"] as const;
export type StageBand = (typeof STAGE_BANDS)[number];
export const STAGE_BAND_LABELS: Record<StageBand, string> = {
  notStarted: "Not started",
  inTraining: "In training",
  ready: "Ready",
  pausedOrStopped: "Paused or stopped",
};
export const STAGE_BAND_OF: Record<Stage, StageBand> = {
  invited: "notStarted",
  consented: "notStarted",
  baselined: "notStarted",
  forecast: "notStarted",
  planned: "inTraining",
  training: "inTraining",
  proficient: "ready",
  paused: "pausedOrStopped",
  withdrawn: "pausedOrStopped",
};

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

import { z } from "zod";
import { intents } from "~/schemas/form";

// Forms and payloads of the forecast area. The worker-forecast payload is one schema for the page loader
// and for GET /api/v1/workers/:workerId/forecast.

export type ExclusionReason =
  | "withdrawn"
  | "no_model_consent"
  | "missing_measures"
  | "not_started"
  // Versions fitted before courses were treated as censored data left these out too.
  | "still_training"
  | "stopped";
export const EXCLUSION_LABELS: Record<ExclusionReason, string> = {
  withdrawn: "Model-use consent withdrawn",
  no_model_consent: "No model-use consent on record",
  missing_measures: "Missing one or more chosen baseline measures",
  not_started: "No training hours logged yet (tells nothing about time to proficiency)",
  still_training: "Still in training when the data was taken (left out by this older version)",
  stopped: "Stopped before reaching the criterion (left out by this older version)",
};

/** The drift alarm's false-alarm rate: one-sided exact binomial test at this level. */
export const DRIFT_ALPHA = 0.05;

const id = z.coerce.number({ message: "Choose a value." }).int("Choose a value.").positive("Choose a value.");

export const criterionFormSchema = z.object({
  deviceTypeId: id,
  scoreThreshold: z.coerce
    .number({ message: "Score threshold must be a number between 0 and 1." })
    .min(0.05, "Score threshold must be at least 0.05.")
    .max(1, "Score threshold must be at most 1."),
  consecutiveSessions: z.coerce
    .number({ message: "Consecutive sessions must be a whole number." })
    .int("Consecutive sessions must be a whole number.")
    .min(1, "At least 1 session.")
    .max(10, "At most 10 sessions."),
});
export type CriterionForm = z.infer<typeof criterionFormSchema>;

export const workbenchFormSchema = z.object({
  deviceTypeId: id,
  measureIds: z.preprocess(
    (v) => (v == null || v === "" ? [] : ([] as unknown[]).concat(v)),
    z
      .array(z.coerce.number().int().positive())
      .min(1, "Choose at least one measure.")
      .max(12, "Choose at most 12 measures."),
  ),
  normSetId: z.preprocess(
    (v) => (v === "" || v == null ? undefined : v),
    z.coerce
      .number({ message: "Choose a norm set." })
      .int("Choose a norm set.")
      .positive("Choose a norm set.")
      .optional(),
  ),
  notes: z.string().trim().max(2000, "Notes are limited to 2,000 characters.").optional(),
});
export type WorkbenchForm = z.infer<typeof workbenchFormSchema>;

/** "Mark as reviewed" on a course's open review flags. */
export const resolveFlagsSchema = z.object({
  intent: z.literal("resolve", { message: "Choose what to record." }),
});

/** "80th percentile": the one way the planning quantile (stored as a share, 0.80) is written on screen. */
export function percentileLabel(q: number): string {
  const n = Math.round(q * 100);
  const suffix =
    n % 10 === 1 && n !== 11 ? "st" : n % 10 === 2 && n !== 12 ? "nd" : n % 10 === 3 && n !== 13 ? "rd" : "th";
  return `${n}${suffix} percentile`;
}

/**
 * The planning figure is one organisation setting (models page), entered as a percentile (80 = the 80th
 * percentile) and stored as a share (0.80); forecasts, drift and every allocation run use it.
 */
export const planningQuantileSchema = z.object({
  planningQuantile: z.coerce
    .number({ message: "Planning percentile must be a whole number from 50 to 95." })
    .int("Planning percentile must be a whole number from 50 to 95.")
    .min(50, "Planning percentile must be at least 50.")
    .max(95, "Planning percentile must be at most 95.")
    .transform((p) => p / 100),
});

/** The models page: a device type's proficiency criterion, or the planning quantile. */
export const modelsFormSchema = intents(
  criterionFormSchema.extend({ intent: z.literal("criterion") }),
  planningQuantileSchema.extend({ intent: z.literal("quantile") }),
);

/** The workbench posts the same choices to fit them or to save the fit as a draft version. */
export const workbenchIntentSchema = intents(
  workbenchFormSchema.extend({ intent: z.literal("fit") }),
  workbenchFormSchema.extend({ intent: z.literal("save") }),
);

/** A model version's page: approve it, or retire it. */
export const versionFormSchema = intents(
  z.object({
    intent: z.literal("approve"),
    confirm: z.literal("yes", { message: "Tick the box to confirm that these forecasts will change." }),
  }),
  z.object({ intent: z.literal("retire") }),
);

const contributionSchema = z.object({
  measureCode: z.string(),
  label: z.string(),
  zScore: z.number(),
  standardised: z.number(),
  coefficient: z.number(),
  logContribution: z.number(),
  multiplier: z.number(),
  sentence: z.string(),
});

/** Why a worker has no forecast on a device type; each reason has one sentence, noForecastText. */
export const NO_FORECAST_REASONS = [
  "no_consent",
  "no_model",
  "missing_measures",
  "stopped",
  "paused",
  "not_computed",
] as const;
export type NoForecastReason = (typeof NO_FORECAST_REASONS)[number];

/** The one wording of each reason (staff pages, the trainer's and assessor's notices, the allocation pool). */
export function noForecastText(reason: NoForecastReason, missingMeasures: readonly string[] = []): string {
  switch (reason) {
    case "no_consent":
      return "No forecast: no planning consent is in force for this worker.";
    case "no_model":
      return "No forecast: there is no approved model for this device type yet.";
    case "missing_measures":
      return `No forecast: the baseline lacks ${missingMeasures.length ? missingMeasures.join(", ") : "a measure the approved model needs"}.`;
    case "stopped":
      return "No forecast: an assessor stopped training on this device type after a pause.";
    case "paused":
      return "No forecast: training on this device type is paused until an assessor reviews it.";
    case "not_computed":
      return "No forecast stored yet, though nothing it needs is missing: it is made the next time the baseline, the consent or the model changes.";
  }
}

export const deviceForecastSchema = z.object({
  deviceType: z.object({ id: z.number(), code: z.string(), name: z.string() }),
  /** ready: numbers below; otherwise why there is no forecast. */
  status: z.enum(["ready", ...NO_FORECAST_REASONS]),
  missingMeasures: z.array(z.string()),
  modelVersion: z
    .object({
      id: z.number(),
      versionNumber: z.number(),
      approvedAt: z.string().nullable(),
      cohortSize: z.number(),
      loocvMaeHours: z.number(),
      loocvCoverage80: z.number(),
      measures: z.array(z.string()),
    })
    .nullable(),
  medianHours: z.number().nullable(),
  lowerHours: z.number().nullable(),
  upperHours: z.number().nullable(),
  intervalLevel: z.number(),
  planningQuantile: z.number(),
  planningHours: z.number().nullable(),
  computedAt: z.string().nullable(),
  /** Clinical view only (assessors); null for coordinators, who never receive scores. */
  explanation: z.object({ baselineHours: z.number(), contributions: z.array(contributionSchema) }).nullable(),
  course: z
    .object({
      status: z.string(),
      cumulativeHours: z.number(),
      proficientOn: z.string().nullable(),
      hoursToProficiency: z.number().nullable(),
    })
    .nullable(),
  progress: z
    .object({
      hoursDone: z.number(),
      status: z.enum(["combined", "prior-only", "review", "proficient"]),
      remainingHours: z.number().nullable(),
      remainingLower: z.number().nullable(),
      remainingUpper: z.number().nullable(),
      remainingPlanningHours: z.number().nullable(),
      curveWeight: z.number().nullable(),
      reason: z.string().nullable(),
    })
    .nullable(),
  reviewFlags: z.array(z.object({ kind: z.string(), reason: z.string(), raisedAt: z.string() })),
});
export type DeviceForecast = z.infer<typeof deviceForecastSchema>;

export const workerForecastSchema = z.object({
  worker: z.object({
    id: z.number(),
    employeeNumber: z.string(),
    name: z.string(),
    site: z.string(),
    department: z.string(),
  }),
  view: z.enum(["clinical", "planning"]),
  planningConsent: z.boolean(),
  forecasts: z.array(deviceForecastSchema),
  howComputed: z.string(),
});
export type WorkerForecast = z.infer<typeof workerForecastSchema>;

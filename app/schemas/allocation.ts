import { z } from "zod";
import { isIsoDate, isoWeekday } from "~/dates/calendar";
import { intents } from "~/schemas/form";

// Shared by the allocation forms, their actions and /api/v1/allocation-runs.

const isoDate = z
  .string()
  .trim()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Use a date like 2027-01-04.")
  .refine(isIsoDate, "Not a real calendar date.");

export const mondayDate = isoDate.refine(
  (s) => isIsoDate(s) && isoWeekday(s) === 1,
  "The start date must be a Monday.",
);

const idList = z.preprocess(
  (v) => (v === undefined || v === "" ? [] : ([] as unknown[]).concat(v).filter((x) => x !== "")),
  z.array(z.coerce.number().int().positive("Choose from the list.")),
);

const checkbox = z.preprocess((v) => v === true || v === "on" || v === "true" || v === "1", z.boolean());

export const whatIfSchema = z
  .object({
    addUnits: z
      .array(
        z.object({
          deviceTypeId: z.coerce.number().int().positive(),
          siteId: z.coerce.number().int().positive(),
          count: z.coerce.number().int().min(1).max(20),
          bookableHoursPerWeek: z.coerce.number().min(1).max(80).default(30),
        }),
      )
      .max(10)
      .default([]),
    removeTrainerIds: z.array(z.coerce.number().int().positive()).max(50).default([]),
  })
  .default({ addUnits: [], removeTrainerIds: [] });
export type WhatIf = z.infer<typeof whatIfSchema>;

/** The parameters of a run as the API takes them (JSON) and as they are stored. */
export const runParametersSchema = z.object({
  label: z.string().trim().max(200).optional(),
  startDate: mondayDate,
  horizonWeeks: z.coerce
    .number({ message: "Horizon must be a number of weeks." })
    .int("Horizon must be whole weeks.")
    .min(1, "Horizon is at least 1 week.")
    .max(26, "Horizon is at most 26 weeks."),
  pool: z
    .object({
      siteIds: idList.default([]),
      departmentIds: idList.default([]),
      includeProficientElsewhere: checkbox.default(false),
    })
    .default({ siteIds: [], departmentIds: [], includeProficientElsewhere: false }),
  /** Not a run parameter: every run plans at the organisation's planning percentile (StoredRunParameters). */
  planningQuantile: z
    .undefined({
      message:
        "Planning quantile: runs use the organisation's planning percentile, set by an assessor under Forecast models; leave it out.",
    })
    .optional(),
  fairnessShare: z.coerce
    .number({ message: "Fairness share must be a number." })
    .min(0, "Fairness share is at least 0.")
    .max(1, "Fairness share is at most 1."),
  whatIf: whatIfSchema,
  baseRunId: z.coerce.number().int().positive().optional(),
  /** start from the published plan: keep published sessions unless a change forces a move */
  fromPublished: z
    .object({
      keepWeight: z.coerce
        .number({ message: "The value of keeping someone's sessions must be a number." })
        .min(0, "The value of keeping someone's sessions is at least 0.")
        .max(100, "The value of keeping someone's sessions is at most 100."),
    })
    .optional(),
});
export type RunParameters = z.infer<typeof runParametersSchema>;
/** A run's parameters as stored: the input plus the organisation's planning quantile when it was made (a share, 0.80). */
export type StoredRunParameters = Omit<RunParameters, "planningQuantile"> & { planningQuantile: number };

/**
 * The new-run form: flat fields. Percentages are typed as percent in the form; the same parameters
 * object as the API comes out.
 */
export const runFormSchema = z
  .object({
    label: z.string().trim().max(200).optional(),
    startDate: z.string().trim().min(1, "Enter the start date (a Monday)."), // checked with the other parameters below
    horizonWeeks: z.string().trim().min(1, "Enter the horizon in weeks."),
    siteIds: idList,
    departmentIds: idList,
    includeProficientElsewhere: checkbox,
    fairnessShare: z.string().trim().min(1, "Enter the fairness share (e.g. 20)."),
    addUnitDeviceTypeId: z.string().optional(),
    addUnitSiteId: z.string().optional(),
    addUnitCount: z.string().optional(),
    removeTrainerIds: idList,
    baseRunId: z.string().optional(),
    fromPublished: checkbox,
    keepWeight: z.string().optional(),
  })
  .transform((f, ctx) => {
    const pct = (s: string, field: string) => {
      const n = Number(s.replace("%", ""));
      if (!Number.isFinite(n)) {
        ctx.addIssue({ code: "custom", path: [field], message: "Enter a number." });
        return NaN;
      }
      return n / 100;
    };
    const addUnits = [] as WhatIf["addUnits"];
    if (f.addUnitDeviceTypeId && f.addUnitSiteId) {
      const count = Number(f.addUnitCount || "1");
      if (!Number.isInteger(count) || count < 1 || count > 20)
        ctx.addIssue({ code: "custom", path: ["addUnitCount"], message: "Add between 1 and 20 units." });
      addUnits.push({
        deviceTypeId: Number(f.addUnitDeviceTypeId),
        siteId: Number(f.addUnitSiteId),
        count,
        bookableHoursPerWeek: 30,
      });
    } else if (f.addUnitDeviceTypeId || f.addUnitSiteId) {
      ctx.addIssue({
        code: "custom",
        path: [f.addUnitDeviceTypeId ? "addUnitSiteId" : "addUnitDeviceTypeId"],
        message: "Choose both the device type and the site of the extra unit.",
      });
    }
    const out = runParametersSchema.safeParse({
      label: f.label || undefined,
      startDate: f.startDate,
      horizonWeeks: f.horizonWeeks,
      pool: {
        siteIds: f.siteIds,
        departmentIds: f.departmentIds,
        includeProficientElsewhere: f.includeProficientElsewhere,
      },
      fairnessShare: pct(f.fairnessShare, "fairnessShare"),
      whatIf: { addUnits, removeTrainerIds: f.removeTrainerIds },
      baseRunId: f.baseRunId ? Number(f.baseRunId) : undefined,
      fromPublished: f.fromPublished ? { keepWeight: f.keepWeight?.trim() || "3" } : undefined,
    });
    if (!out.success) {
      // Report the nested parameter errors under the form's flat field names.
      const flat: Record<string, string> = {
        "pool.siteIds": "siteIds",
        "pool.departmentIds": "departmentIds",
        "whatIf.addUnits": "addUnitCount",
        "whatIf.removeTrainerIds": "removeTrainerIds",
        "fromPublished.keepWeight": "keepWeight",
      };
      for (const issue of out.error.issues) {
        const key = issue.path.slice(0, 2).join(".");
        const path = issue.path.length ? [flat[key] ?? String(issue.path[0])] : [];
        ctx.addIssue({ code: "custom", path, message: issue.message });
      }
      return z.NEVER;
    }
    return out.data;
  });

export const PUBLISH_CONFIRM_MESSAGE =
  "Tick the box to confirm the numbers above before publishing; nothing was published and nobody was e-mailed.";
export const publishSchema = z.object({
  intent: z.literal("publish"),
  expectedPlanVersion: z.coerce.number({ message: "The page is missing the plan version; reload it." }).int().min(0),
  /** the second step: the coordinator has seen who will be ready and who will be e-mailed */
  confirm: z.literal("yes", { message: PUBLISH_CONFIRM_MESSAGE }),
});

/** Archive or un-archive a run (the run page). */
export const archiveSchema = z.object({
  intent: z.literal("archive"),
  archived: z.enum(["yes", "no"], { message: "Say whether to archive the run." }),
});
export const runPageSchema = intents(publishSchema, archiveSchema);

// Fleet and trainers forms.
const hhmm = z
  .string()
  .trim()
  .regex(/^([01]\d|2[0-3]):[0-5]\d$/, "Use a time like 08:30.");
const optionalText = (max: number) =>
  z
    .string()
    .trim()
    .max(max)
    .optional()
    .transform((s) => (s ? s : null));

const wholeMinutes = (what: string, min: number, max: number) =>
  z.coerce
    .number({ message: `${what} must be a number of minutes.` })
    .int(`${what}: whole minutes, please.`)
    .min(min, `${what}: at least ${min} minutes.`)
    .max(max, `${what}: at most ${max} minutes.`);

// The shortest and longest session lie within the wear-time limit: shortest ≤ longest ≤ wear-time limit.
export const deviceTypeFormSchema = z
  .object({
    intent: z.literal("device-type"),
    deviceTypeId: z.coerce.number().int().positive(),
    wearTimeLimitMinutes: z.coerce
      .number({ message: "Wear-time limit must be a number of minutes." })
      .int("Whole minutes, please.")
      .min(10, "At least 10 minutes.")
      .max(600, "At most 600 minutes."),
    minSessionMinutes: wholeMinutes("Shortest session", 5, 600),
    maxSessionMinutes: wholeMinutes("Longest session", 5, 600),
    defaultMaxHoursPerWeek: z.coerce
      .number({ message: "Max hours per week must be a number." })
      .min(0.5, "At least 0.5 h.")
      .max(40, "At most 40 h."),
    fitRules: optionalText(2000),
  })
  .refine((v) => v.maxSessionMinutes <= v.wearTimeLimitMinutes, {
    path: ["maxSessionMinutes"],
    message: "Longest session: at most the wear-time limit.",
  })
  .refine((v) => v.minSessionMinutes <= v.maxSessionMinutes, {
    path: ["minSessionMinutes"],
    message: "Shortest session: at most the longest session.",
  });

export const unitFormSchema = z.object({
  intent: z.literal("unit"),
  unitId: z.coerce.number().int().positive(),
  status: z.enum(["in_service", "maintenance", "retired"], { message: "Choose a status." }),
  bookableHoursPerWeek: z.coerce
    .number({ message: "Bookable hours must be a number." })
    .min(0, "At least 0 h.")
    .max(168, "At most 168 h."),
});

// A leave or maintenance period: its fields, and the check that it does not end before it starts.
const dateFields = { startsOn: isoDate, endsOn: isoDate, reason: optionalText(300) };
const endsOnOrAfterStart: [(r: { startsOn: string; endsOn: string }) => boolean, { path: string[]; message: string }] =
  [(r) => r.endsOn >= r.startsOn, { path: ["endsOn"], message: "The end date must be on or after the start date." }];

export const dateRange = z.object(dateFields).refine(...endsOnOrAfterStart);

export const maintenanceFormSchema = z
  .object({ intent: z.literal("add-maintenance"), unitId: z.coerce.number().int().positive(), ...dateFields })
  .refine(...endsOnOrAfterStart);

/** A row's remove button: the intent names what is removed. */
export const removeById = <I extends string>(intent: I) =>
  z.object({ intent: z.literal(intent), id: z.coerce.number().int().positive() });

export const trainerFormSchema = z.object({
  intent: z.literal("trainer"),
  hoursPerWeek: z.coerce
    .number({ message: "Hours per week must be a number." })
    .min(0, "At least 0 h.")
    .max(60, "At most 60 h."),
  traineesPerSession: z.coerce
    .number({ message: "Trainees per session must be a number." })
    .int("A whole number.")
    .min(1, "At least 1.")
    .max(8, "At most 8."),
  maxContinuousMinutes: wholeMinutes("Longest teaching without a break", 30, 600),
  breakMinutes: wholeMinutes("Break", 5, 120),
  deviceTypeIds: idList,
});

export const patternFormSchema = z
  .object({
    intent: z.literal("add-pattern"),
    weekday: z.coerce
      .number({ message: "Choose a weekday." })
      .int()
      .min(1, "Choose a weekday.")
      .max(7, "Choose a weekday."),
    startTime: hhmm,
    endTime: hhmm,
  })
  .refine((r) => r.endTime > r.startTime, { path: ["endTime"], message: "The end time must be after the start time." });

export const leaveFormSchema = z
  .object({ intent: z.literal("add-leave"), ...dateFields })
  .refine(...endsOnOrAfterStart);

export const workerTrainingFormSchema = z
  .object({
    intent: z.literal("training-fields"),
    maxHoursPerWeek: z
      .string()
      .trim()
      .optional()
      .transform((s, ctx) => {
        if (!s) return null;
        const n = Number(s);
        if (!Number.isFinite(n) || n < 0.5 || n > 40) {
          ctx.addIssue({
            code: "custom",
            message: "Max hours per week must be between 0.5 and 40, or empty for the device default.",
          });
          return z.NEVER;
        }
        return n;
      }),
    priority: z.coerce
      .number({ message: "Priority must be a number." })
      .gt(0, "Priority must be above 0.")
      .max(100, "Priority is at most 100."),
    priorityReason: optionalText(500),
  })
  .refine((r) => r.priority === 1 || !!r.priorityReason, {
    path: ["priorityReason"],
    message: "Give a reason when the priority is not the default 1.",
  });

/** The forms of the fleet page. */
export const fleetPageSchema = intents(
  deviceTypeFormSchema,
  unitFormSchema,
  maintenanceFormSchema,
  removeById("remove-maintenance"),
);

/** The forms of a trainer's page. */
export const trainerPageSchema = intents(
  trainerFormSchema,
  patternFormSchema,
  leaveFormSchema,
  removeById("remove-pattern"),
  removeById("remove-leave"),
);

/** The forms of a trainee's page. */
export const traineePageSchema = intents(workerTrainingFormSchema, leaveFormSchema, removeById("remove-leave"));

import { z } from "zod";
import { intents } from "./form";

// An assessor's decision on a paused course: the form, the action and the model share this schema.
/** The assessor's review page of one worker's course on one device type. */
export const reviewPath = (workerId: number, deviceTypeId: number) =>
  `/assess/workers/${workerId}/courses/${deviceTypeId}`;

export const COURSE_DECISIONS = ["resume", "resume_with_conditions", "stop"] as const;
export type CourseDecision = (typeof COURSE_DECISIONS)[number];
/** What a course_reviews row records: a decision on a pause, or a safety finding reviewed on a running course. */
export type ReviewKind = CourseDecision | "acknowledge";
export const COURSE_DECISION_LABELS: Record<ReviewKind, string> = {
  resume: "Resume",
  resume_with_conditions: "Resume with conditions",
  stop: "Stop this device type",
  acknowledge: "Safety finding reviewed, course unchanged",
};

const optionalText = (label: string, max: number) =>
  z.preprocess(
    (v) => (typeof v === "string" && v.trim() === "" ? undefined : v),
    z
      .string()
      .trim()
      .max(max, `${label}: at most ${max.toLocaleString("en-GB")} characters.`)
      .optional(),
  );

export const courseDecisionSchema = z
  .object({
    intent: z.literal("decide"),
    decision: z.enum(COURSE_DECISIONS, {
      message: "Decision: choose resume, resume with conditions or stop this device type.",
    }),
    wearTimeLimitMinutes: z.preprocess(
      (v) => (v === "" || v == null ? undefined : v),
      z.coerce
        .number({ message: "Wear-time limit: a whole number of minutes." })
        .int("Wear-time limit: a whole number of minutes.")
        .min(5, "Wear-time limit: at least 5 minutes.")
        .optional(),
    ),
    conditions: optionalText("Other conditions", 1000),
    clinicalNote: z
      .string({ message: "Clinical note: describe what you reviewed and why you decided so." })
      .trim()
      .min(10, "Clinical note: describe what you reviewed and why you decided so (at least 10 characters).")
      .max(4000, "Clinical note: at most 4,000 characters."),
  })
  .superRefine((v, ctx) => {
    if (v.decision === "resume_with_conditions" && v.wearTimeLimitMinutes == null && !v.conditions)
      ctx.addIssue({
        code: "custom",
        path: ["wearTimeLimitMinutes"],
        message: "Wear-time limit: set a lower limit for this worker, or describe the other conditions.",
      });
    if (v.decision !== "resume_with_conditions" && v.wearTimeLimitMinutes != null)
      ctx.addIssue({
        code: "custom",
        path: ["wearTimeLimitMinutes"],
        message: "Wear-time limit: only a resume with conditions sets one; choose that decision or clear the field.",
      });
  });
export type CourseDecisionInput = z.infer<typeof courseDecisionSchema>;

/** Closing the open safety findings of a course that is not paused, with a clinical note. */
export const acknowledgeFindingsSchema = z.object({
  intent: z.literal("acknowledge"),
  clinicalNote: z
    .string({ message: "Clinical note: say what you checked about the finding." })
    .trim()
    .min(10, "Clinical note: say what you checked about the finding (at least 10 characters).")
    .max(4000, "Clinical note: at most 4,000 characters."),
});

/** The course review page's two forms. */
export const courseReviewPageSchema = intents(courseDecisionSchema, acknowledgeFindingsSchema);

import { z } from "zod";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";
import { withdrawConfirmField } from "./consent";

// Worker portal forms: own consent, review requests; and the assessors' answer to a review.
const purpose = z.enum(CONSENT_PURPOSES, { message: "Purpose: choose assessment, planning or model." });

export const giveOwnConsentSchema = z.object({
  intent: z.literal("give"),
  purpose,
  confirmRead: z.literal("on", { message: "Tick the box to confirm you have read the current text for this purpose." }),
});

export const withdrawOwnConsentSchema = z.object({
  intent: z.literal("withdraw"),
  purpose,
  confirmWithdraw: withdrawConfirmField,
});

export const REVIEW_SUBJECTS = ["forecast", "plan"] as const;
export const REVIEW_SUBJECT_LABELS: Record<(typeof REVIEW_SUBJECTS)[number], string> = {
  forecast: "My forecast (hours to proficiency)",
  plan: "My training plan (sessions, device, timing)",
};

export const reviewRequestSchema = z.object({
  subject: z.enum(REVIEW_SUBJECTS, { message: "What to review: choose your forecast or your plan." }),
  deviceTypeId: z.preprocess(
    (v) => (v === "" || v == null ? undefined : v),
    z.coerce
      .number({ message: "Device: choose one of your devices or leave it empty." })
      .int()
      .positive("Device: choose one of your devices or leave it empty.")
      .optional(),
  ),
  message: z
    .string({ message: "Message: say what you would like a person to look at." })
    .trim()
    .min(10, "Message: say in a sentence or two what you would like a person to look at (at least 10 characters).")
    .max(2000, "Message: at most 2,000 characters."),
});
export type ReviewRequestInput = z.infer<typeof reviewRequestSchema>;

export const reviewAnswerSchema = z.object({
  reviewId: z.coerce.number({ message: "Review: not found." }).int().positive("Review: not found."),
  answer: z
    .string({ message: "Answer: write your answer to the worker." })
    .trim()
    .min(5, "Answer: write your answer to the worker (at least 5 characters).")
    .max(4000, "Answer: at most 4,000 characters."),
});

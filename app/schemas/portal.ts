import { z } from "zod";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";

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
  confirmErase: z.literal("on", {
    message: "Tick the box to confirm: what this consent covered is erased at once and cannot be restored.",
  }),
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

// Session times are the site's wall-clock times. The allocation area stores them without a zone
// ("2026-12-07T09:00:00"), older rows carry a "Z"; both are read here as the same wall-clock time and
// formatted in UTC on the server and in the browser alike (no hydration drift, no shift by the server's zone).
// SEAM: the day boundaries of "today" and "this week" use UTC, i.e. they assume the site clock is UTC (as for
// the invented demo sites); a per-site time zone would change only wallClockIso and the bounds.
export function wallClockIso(v: unknown): string {
  const s = v instanceof Date ? v.toISOString() : String(v);
  return /(Z|[+-]\d\d:?\d\d)$/.test(s)
    ? new Date(s).toISOString()
    : new Date(`${s.length === 16 ? `${s}:00` : s}Z`).toISOString();
}
const DAY = new Intl.DateTimeFormat("en-GB", {
  weekday: "short",
  day: "numeric",
  month: "short",
  year: "numeric",
  timeZone: "UTC",
});
const TIME = new Intl.DateTimeFormat("en-GB", { hour: "2-digit", minute: "2-digit", hour12: false, timeZone: "UTC" });
export const formatDay = (iso: string) => DAY.format(new Date(iso));
export const formatTime = (iso: string) => TIME.format(new Date(iso));
export const formatSpan = (start: string, end: string | null) =>
  `${formatTime(start)}${end ? `–${formatTime(end)}` : ""}`;
/** "2026-12-02T09:30" for a datetime-local control (UTC). */
export const toLocalInput = (iso: string) => new Date(iso).toISOString().slice(0, 16);

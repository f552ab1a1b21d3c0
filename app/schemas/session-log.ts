import { z } from "zod";
import { hoursBetween, isIsoDate, wallClock } from "~/dates/calendar";

// The trainer's session log: start and end, task score on the device's standard task, notes and
// adverse events. Shared by the form and the action; field names match the form controls.
export const ADVERSE_KINDS = ["pain", "numbness", "skin", "fatigue", "other"] as const;
export type AdverseKind = (typeof ADVERSE_KINDS)[number];
export const ADVERSE_LABELS: Record<AdverseKind, string> = {
  pain: "Pain",
  numbness: "Numbness or tingling",
  skin: "Skin (redness, pressure marks, abrasion)",
  fatigue: "Fatigue",
  other: "Other",
};
export const SEVERITIES = ["mild", "moderate", "severe"] as const;
export type Severity = (typeof SEVERITIES)[number];

/** "2026-12-02T09:30" from a datetime-local control: the site's wall-clock time, kept as a WallClock string. */
const localDateTime = (label: string) =>
  z
    .string({ message: `${label}: enter a date and time.` })
    .trim()
    .regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2})?$/, `${label}: enter a date and time (YYYY-MM-DD HH:MM).`)
    .transform((s) => wallClock(s))
    .refine(realWallClock, `${label}: that is not a real date and time.`);
const realWallClock = (w: string) =>
  isIsoDate(w.slice(0, 10)) &&
  Number(w.slice(11, 13)) < 24 &&
  Number(w.slice(14, 16)) < 60 &&
  Number(w.slice(17, 19)) < 60;

const severityField = z.preprocess(
  (v) => (v === "" || v === "none" || v == null ? undefined : v),
  z.enum(SEVERITIES, { message: "Severity: choose none, mild, moderate or severe." }).optional(),
);
const noteField = z.preprocess(
  (v) => (typeof v === "string" && v.trim() === "" ? undefined : v),
  z.string().trim().max(1000, "Event notes: at most 1,000 characters.").optional(),
);

/**
 * "0,62" reads as 0.62 (a decimal comma, as typed on many keyboards); an empty field is missing (not 0);
 * anything else is left for zod to judge.
 */
export const decimalComma = (v: unknown) => {
  if (typeof v !== "string") return v;
  const t = v.trim();
  return t === "" ? undefined : t.replace(/^(-?\d*),(\d+)$/, "$1.$2");
};

/** The score as read, naming what was typed when it differs (e.g. `0.62 (typed "0,62")`). */
export function scoreRead(value: number, typed: FormDataEntryValue | null): string {
  const t = typeof typed === "string" ? typed.trim() : "";
  return t && t !== String(value) ? `${value} (typed "${t}")` : String(value);
}

/** A task score between 0 and 1, typed with a decimal point or comma. */
export const taskScoreField = (message: string) =>
  z.preprocess(decimalComma, z.coerce.number({ message }).min(0, message).max(1, message));

export const trainerLogSchema = z
  .object({
    start: localDateTime("Start"),
    end: localDateTime("End"),
    taskScore: taskScoreField("Task score: a number between 0 and 1."),
    notes: z.preprocess(
      (v) => (typeof v === "string" && v.trim() === "" ? undefined : v),
      z.string().trim().max(2000, "Notes: at most 2,000 characters.").optional(),
    ),
    ...(Object.fromEntries(
      ADVERSE_KINDS.flatMap((k) => [
        [`ae_${k}`, severityField],
        [`ae_${k}_notes`, noteField],
      ]),
    ) as Record<`ae_${AdverseKind}`, typeof severityField> & Record<`ae_${AdverseKind}_notes`, typeof noteField>),
  })
  .superRefine((v, ctx) => {
    // On the wall clock; the model checks the elapsed time in the site's zone.
    const hours = realWallClock(v.start) && realWallClock(v.end) ? hoursBetween(v.start, v.end, "UTC") : Number.NaN;
    if (!(hours > 0)) ctx.addIssue({ code: "custom", path: ["end"], message: "End: must be after the start." });
    else if (hours > 8)
      ctx.addIssue({ code: "custom", path: ["end"], message: "End: a session lasts at most 8 hours." });
    if (v.ae_other && !v.ae_other_notes)
      ctx.addIssue({ code: "custom", path: ["ae_other_notes"], message: "Other event: describe what happened." });
  });
export type TrainerLogInput = z.infer<typeof trainerLogSchema>;

export interface AdverseEventInput {
  kind: AdverseKind;
  severity: Severity;
  notes: string | null;
}

/** The adverse events ticked on the form, in the fixed order of ADVERSE_KINDS. */
export function adverseEventsFrom(v: TrainerLogInput): AdverseEventInput[] {
  const out: AdverseEventInput[] = [];
  for (const kind of ADVERSE_KINDS) {
    const severity = v[`ae_${kind}`];
    if (severity) out.push({ kind, severity, notes: v[`ae_${kind}_notes`] ?? null });
  }
  return out;
}

/** Why a trainee did not come: a fixed list, and "other" with the trainer's words. */
export const NO_SHOW_REASONS = ["ill", "leave", "work", "declined", "unknown", "other"] as const;
export type NoShowReason = (typeof NO_SHOW_REASONS)[number];
export const NO_SHOW_LABELS: Record<NoShowReason, string> = {
  ill: "Ill or injured",
  leave: "On leave",
  work: "Needed at work (shift or line)",
  declined: "Came but declined the session",
  unknown: "Did not come, no reason known",
  other: "Other",
};

/** A no-show as the trainer records it: a reason from the list, with words when it is "other". */
export const noShowSchema = z
  .object({
    intent: z.literal("no_show", { message: "Choose what to record." }),
    reason: z.enum(NO_SHOW_REASONS, { message: "No-show reason: choose one from the list." }),
    reasonNote: z.preprocess(
      (v) => (typeof v === "string" && v.trim() === "" ? undefined : v),
      z.string().trim().max(500, "Other reason: at most 500 characters.").optional(),
    ),
  })
  .superRefine((v, ctx) => {
    if (v.reason === "other" && !v.reasonNote)
      ctx.addIssue({
        code: "custom",
        path: ["reasonNote"],
        message: "Other reason: say why the trainee did not come.",
      });
  });
export type NoShowInput = z.infer<typeof noShowSchema>;

/** A no-show's reason as a reader sees it (older no-shows were recorded without one). */
export function noShowText(reason: NoShowReason | null, note: string | null): string {
  if (!reason) return "no reason recorded";
  return reason === "other" && note ? `Other: ${note}` : NO_SHOW_LABELS[reason];
}

/** Why a log with a severe adverse event is never undone (said by the refusal and on the session page). */
export const SEVERE_STAYS =
  "This log reported a severe adverse event. Safety reports are never undone: the log, the event and the pause stay on record for the assessors' review. If something in it is wrong, tell the assessor who reviews the course.";

/** Undo of the trainer's own last mark (log or no-show) of the day. */
export const undoMarkSchema = z.object({
  intent: z.literal("undo", { message: "Choose what to record." }),
});

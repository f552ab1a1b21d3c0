import { z } from "zod";
import { CONSENT_PURPOSES, type ConsentPurpose } from "~/domain/consent-purposes";
import { sessionSchema } from "~/schemas/assessment";
import { intents } from "~/schemas/form";

export const PURPOSE_LABELS: Record<ConsentPurpose, string> = {
  assessment: "Assessment: baseline may be recorded",
  planning: "Planning: forecast may be used to allocate training",
  model: "Model: de-identified record may join a model cohort",
};

// Consent forms (docs/consent-and-disclosure.md): purposes ticked by the worker, witnessed by an assessor.
const purpose = z.enum(CONSENT_PURPOSES, { message: "Purpose: assessment, planning or model." });

export const recordConsentSchema = z.object({
  purposes: z.preprocess(
    (v) => (v == null ? [] : ([] as unknown[]).concat(v)),
    z.array(purpose).min(1, "Purposes: tick at least one purpose the worker agrees to."),
  ),
  witnessUserId: z.coerce
    .number({ message: "Witness: choose the assessor who witnessed it." })
    .int()
    .positive("Witness: choose the assessor who witnessed it."),
  confirmRead: z.literal("on", {
    message: "Confirm that the worker was shown the current text of each ticked purpose.",
  }),
});

/**
 * The one confirmation of a withdrawal, for staff and worker alike: a box ticked on purpose (never pre-ticked),
 * next to what happens at once and what cannot be undone (the erasure; consent can be given again).
 */
export const withdrawConfirmField = z.literal("on", {
  message: "Confirm withdrawal: tick the box to say you have read what happens at once and what cannot be undone.",
});

export const withdrawConsentSchema = z.object({
  purpose,
  confirmWithdraw: withdrawConfirmField,
});

/** What a withdrawal does, in true words, for the page's reader: the worker themselves or staff recording it. */
export function withdrawalEffects(p: ConsentPurpose, reader: "worker" | "staff") {
  const your = reader === "worker" ? "your" : "the worker's";
  const you = reader === "worker" ? "you leave" : "the worker leaves";
  const erased: Record<ConsentPurpose, string | null> = {
    assessment: `Erased at once: ${your} baseline assessments (results and uploaded traces) and forecasts; future training sessions are cancelled and ${you} every training plan.`,
    planning: `Erased at once: ${your} forecasts; future training sessions are cancelled and ${you} every training plan. The training coordinators are told.`,
    model: null,
  };
  return {
    now: erased[p] ?? `Nothing is erased: from now on ${your} de-identified record does not join new forecast models.`,
    kept: "Kept: a record that this consent was withdrawn, when, and who recorded it.",
    undo:
      erased[p] === null
        ? "Consent can be given again later."
        : "The erasure cannot be undone: erased data do not come back. Consent can be given again later, and only data recorded from then on are kept.",
    confirm:
      erased[p] === null
        ? "I understand: this takes effect at once."
        : "I understand: this takes effect at once, and the erasure cannot be undone.",
  };
}

/** The forms of a worker's record (assessor): record consent, withdraw one purpose, start a session. */
export const workerRecordSchema = intents(
  recordConsentSchema.safeExtend({ intent: z.literal("consent") }),
  withdrawConsentSchema.safeExtend({ intent: z.literal("withdraw") }),
  sessionSchema.safeExtend({ intent: z.literal("session") }),
);

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

export const withdrawConsentSchema = z.object({
  purpose,
  confirm: z
    .string()
    .refine((s) => s.trim().toUpperCase() === "WITHDRAW", "Type WITHDRAW to confirm; the data are erased at once."),
});

/** The forms of a worker's record (assessor): record consent, withdraw one purpose, start a session. */
export const workerRecordSchema = intents(
  recordConsentSchema.safeExtend({ intent: z.literal("consent") }),
  withdrawConsentSchema.safeExtend({ intent: z.literal("withdraw") }),
  sessionSchema.safeExtend({ intent: z.literal("session") }),
);

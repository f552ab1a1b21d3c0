import { z } from "zod";
import { MEASURE_DIRECTIONS } from "~/compute/features";
import { MAX_ABS_VALUE, TRACE_KINDS, type TraceKind } from "~/compute/trace-parsing";
import { addDays, todayIn } from "~/dates";
import { intents } from "~/schemas/form";

// Forms of the baseline battery: measures, sessions, manual results, uploads, norm sets.

/** computeTrace output keys start with these prefixes, per trace kind. */
export const TRACE_KEY_PREFIX: Record<TraceKind, string> = {
  sway: "sway.",
  tracking: "tracking.",
  glove: "hand.",
  timing: "timing.",
  force: "force.",
};
export const TRACE_KIND_LABELS: Record<TraceKind, string> = {
  sway: "Postural sway (t, x, y)",
  tracking: "Foot tracking (t, target, cursor)",
  glove: "Glove joint angles (t + one column per joint)",
  timing: "Timing (cue_ms, onset_ms)",
  force: "Force grading (target, produced)",
};
/** Outputs that can be scored (they have a better/worse direction), by trace kind. */
export function scorableOutputs(
  kind: TraceKind,
): { key: string; label: string; unit: string; higherIsBetter: boolean }[] {
  return Object.entries(MEASURE_DIRECTIONS)
    .filter(([k, d]) => k.startsWith(TRACE_KEY_PREFIX[kind]) && d.higherIsBetter !== null)
    .map(([key, d]) => ({ key, label: d.label, unit: d.unit, higherIsBetter: d.higherIsBetter as boolean }));
}

export const measureSchema = z
  .object({
    name: z.string().trim().min(2, "Name: at least 2 characters.").max(200),
    code: z
      .string()
      .trim()
      .regex(/^[a-z][a-zA-Z0-9]*(\.[a-zA-Z0-9]+)*$/, "Code: letters and digits in dotted parts, e.g. pegboard.right."),
    unit: z.string().trim().min(1, "Unit: say what the number counts, e.g. pins in 30 s.").max(40),
    direction: z.enum(["higher", "lower"], { message: "Direction: choose whether higher or lower is better." }),
    entry: z.enum(["manual", "trace"], { message: "Entry: choose manual or trace." }),
    traceKind: z.union([z.literal(""), z.enum(TRACE_KINDS as [TraceKind, ...TraceKind[]])]).optional(),
    description: z.string().trim().max(2000).optional(),
  })
  .superRefine((v, ctx) => {
    if (v.entry === "trace") {
      if (!v.traceKind) {
        ctx.addIssue({
          code: "custom",
          path: ["traceKind"],
          message: "Trace format: choose which trace this measure is computed from.",
        });
        return;
      }
      const outputs = scorableOutputs(v.traceKind);
      const out = outputs.find((o) => o.key === v.code);
      if (!out)
        ctx.addIssue({
          code: "custom",
          path: ["code"],
          message: `Code: a ${v.traceKind} measure must be one of ${outputs.map((o) => o.key).join(", ")}.`,
        });
      else if ((v.direction === "higher") !== out.higherIsBetter)
        ctx.addIssue({
          code: "custom",
          path: ["direction"],
          message: `Direction: for ${out.label} ${out.higherIsBetter ? "higher" : "lower"} is better.`,
        });
    } else if (/^(sway|tracking|hand|timing|force)\./.test(v.code)) {
      ctx.addIssue({
        code: "custom",
        path: ["code"],
        message: "Code: sway., tracking., hand., timing. and force. are kept for trace measures.",
      });
    }
  });

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, "Date: use the form YYYY-MM-DD.")
  .refine((s) => !Number.isNaN(Date.parse(s)), "Date: not a real date.");

/** The measures page: add a measure, or switch one on or off. */
export const measuresFormSchema = intents(
  measureSchema.safeExtend({ intent: z.literal("create") }),
  z.object({
    intent: z.literal("toggle"),
    id: z.coerce.number().int().positive(),
    active: z.enum(["true", "false"]).transform((v) => v === "true"),
  }),
);

export const sessionSchema = z.object({
  assessedOn: isoDate.refine(
    // A day of slack: "today" on a site clock ahead of UTC is already tomorrow in UTC.
    (s) => s <= addDays(todayIn("UTC"), 1),
    "Date: an assessment cannot be in the future.",
  ),
  notes: z.string().trim().max(4000).optional(),
});

const SCORE_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** One typed score of the measure `name`: blank is skipped (undefined); a decimal comma is refused. */
const scoreText = (name: string) =>
  z
    .string()
    .trim()
    .optional()
    .transform((raw, ctx) => {
      if (!raw) return undefined;
      if (!SCORE_TEXT.test(raw)) {
        ctx.addIssue({
          code: "custom",
          message: `${name}: "${raw}" is not a number${/,/.test(raw) ? " (use a decimal point)" : ""}.`,
        });
        return z.NEVER;
      }
      const value = Number(raw);
      if (!(Math.abs(value) <= MAX_ABS_VALUE)) {
        ctx.addIssue({ code: "custom", message: `${name}: the score is outside the accepted range (±1e12).` });
        return z.NEVER;
      }
      return value;
    });

/** Manual entry of the active manual `measures`: fields named `m.<measureId>`; blank fields are skipped. */
export function manualScoresSchema(measures: { id: number; name: string }[]) {
  return z
    .object({
      intent: z.literal("manual"),
      m: z.object(Object.fromEntries(measures.map((m) => [String(m.id), scoreText(m.name)]))).default({}),
    })
    .superRefine((v, ctx) => {
      if (!Object.values(v.m).some((x) => x !== undefined))
        ctx.addIssue({ code: "custom", path: [], message: "Enter at least one score." });
    });
}

/** The typed scores of a parsed manual entry, by measure id. */
export function manualValues(m: Record<string, number | undefined>): { measureId: number; value: number }[] {
  return Object.entries(m).flatMap(([id, value]) => (value === undefined ? [] : [{ measureId: Number(id), value }]));
}

export const traceUploadSchema = z.object({
  kind: z.enum(TRACE_KINDS as [TraceKind, ...TraceKind[]], { message: "Trace kind: choose what the file records." }),
  sampleRateHz: z.preprocess(
    (v) => (v === "" || v == null ? undefined : v),
    z.coerce
      .number({ message: "Sample rate: a number in Hz." })
      .positive("Sample rate: above 0 Hz.")
      .max(100_000, "Sample rate: at most 100,000 Hz.")
      .optional(),
  ),
});

export const MAX_TRACE_BYTES = 25 * 1024 * 1024;
export const MAX_TRACE_ROWS = 200_000;

export const publishedNormSchema = z.object({
  name: z.string().trim().min(2, "Name: at least 2 characters.").max(200),
  source: z.string().trim().min(5, "Source: cite the published table (authors, year, title, table).").max(2000),
  sourceDate: isoDate,
});

export interface NormValue {
  measureId: number;
  mean: number;
  sd: number;
  n: number | null;
}

type NormCells = { mean?: unknown; sd?: unknown; n?: unknown };

/**
 * Published norm values, posted as `mean.<measureId>`, `sd.<measureId>`, `n.<measureId>`; a measure is
 * skipped when its mean and SD are both blank. Returns the values and, per bad cell, an issue on that cell.
 */
export function normValues(
  cells: NormCells,
  measures: { id: number; name: string }[],
): { values: NormValue[]; issues: { path: string[]; message: string }[] } {
  const cell = (group: unknown, id: number) =>
    group && typeof group === "object" ? String((group as Record<string, unknown>)[id] ?? "").trim() : "";
  const num = (s: string) => (/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(s) ? Number(s) : NaN);
  const values: NormValue[] = [];
  const issues: { path: string[]; message: string }[] = [];
  for (const m of measures) {
    const [mean, sd, n] = [cell(cells.mean, m.id), cell(cells.sd, m.id), cell(cells.n, m.id)];
    if (mean === "" && sd === "") continue;
    if (Number.isNaN(num(mean)))
      issues.push({ path: ["mean", String(m.id)], message: `${m.name}: mean must be a number.` });
    if (!(num(sd) > 0)) issues.push({ path: ["sd", String(m.id)], message: `${m.name}: SD must be a number above 0.` });
    if (n !== "" && !(Number.isInteger(num(n)) && num(n) >= 2))
      issues.push({ path: ["n", String(m.id)], message: `${m.name}: n must be a whole number of at least 2.` });
    values.push({ measureId: m.id, mean: num(mean), sd: num(sd), n: n === "" ? null : num(n) });
  }
  if (issues.length === 0 && values.length === 0)
    issues.push({ path: [], message: "Enter a mean and SD for at least one measure." });
  return { values, issues };
}

export const cohortNormSchema = z.object({
  name: z.string().trim().min(2, "Name: at least 2 characters.").max(200),
  siteId: z.preprocess((v) => (v === "" || v == null ? null : v), z.coerce.number().int().positive().nullable()),
});

/** The norm sets page: derive from the cohort, or enter a published table for these measures. */
export function normsPageSchema(measures: { id: number; name: string }[]) {
  const cells = z.record(z.string(), z.string()).optional();
  return intents(
    cohortNormSchema.extend({ intent: z.literal("cohort") }),
    publishedNormSchema
      .extend({ intent: z.literal("published"), mean: cells, sd: cells, n: cells })
      // Checked even when the name or source is wrong, so every problem is named at once.
      .superRefine(
        (v, ctx) => {
          for (const issue of normValues(v, measures).issues) ctx.addIssue({ code: "custom", ...issue });
        },
        { when: () => true },
      ),
  );
}

/** The forms of an assessment session's page: manual scores, a trace upload, re-scoring. */
export function sessionPageSchema(manualMeasures: { id: number; name: string }[]) {
  return intents(
    manualScoresSchema(manualMeasures),
    traceUploadSchema.safeExtend({ intent: z.literal("upload") }),
    z.object({
      intent: z.literal("rescore"),
      normSetId: z.preprocess(
        (v) => (v === "" || v == null ? undefined : v),
        z.coerce.number({ message: "Norm set: choose one from the list." }).int().positive().optional(),
      ),
    }),
  );
}

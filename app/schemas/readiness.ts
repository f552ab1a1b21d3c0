import { z } from "zod";

// Fixed groupings a manager may see (docs/consent-and-disclosure.md). No free filters: an organisation only switches
// whole groupings on or off.
export const GROUPINGS = ["site", "department", "deviceType", "stage", "week"] as const;
export type Grouping = (typeof GROUPINGS)[number];
export const GROUPING_LABELS: Record<Grouping, string> = {
  site: "Site",
  department: "Department",
  deviceType: "Device type",
  stage: "Readiness stage",
  week: "Planned ready week",
};
/** Row groupings (who is counted together) and column groupings (what is counted). */
export const ROW_GROUPINGS: Grouping[] = ["site", "department"];
export const COLUMN_GROUPINGS: Grouping[] = ["deviceType", "stage", "week"];

export const MAX_THRESHOLD = 50;
/** Bounds of the share of a table protection may hide before the board groups more coarsely (%). */
export const HIDDEN_SHARE_PERCENT = { min: 5, max: 60 } as const;

const groupingList = z.preprocess(
  (v) => (v == null || v === "" ? [] : ([] as unknown[]).concat(v)),
  z.array(z.enum(GROUPINGS, { message: "Unknown grouping." })),
);

/** Organisation settings form (admin). Threshold never below 5. */
export const organisationSettingsSchema = z.object({
  disclosureThreshold: z.coerce
    .number({ message: "Enter the smallest group size as a whole number." })
    .int("Enter the smallest group size as a whole number.")
    .min(5, "The smallest group size is at least 5: smaller groups could single people out.")
    .max(MAX_THRESHOLD, `The smallest group size can be at most ${MAX_THRESHOLD}.`),
  maxHiddenSharePercent: z.preprocess(
    (v) => (v === "" ? undefined : v),
    z.coerce
      .number({ message: "Enter the share of hidden cells as a whole number of per cent." })
      .int("Enter the share of hidden cells as a whole number of per cent.")
      .min(
        HIDDEN_SHARE_PERCENT.min,
        `The share of hidden cells is at least ${HIDDEN_SHARE_PERCENT.min} %: lower would always force the coarsest grouping.`,
      )
      .max(
        HIDDEN_SHARE_PERCENT.max,
        `The share of hidden cells is at most ${HIDDEN_SHARE_PERCENT.max} %: a table hiding more than that tells a manager little.`,
      ),
  ),
  groupings: groupingList
    .refine(
      (g) => g.some((x) => ROW_GROUPINGS.includes(x)),
      "Choose at least one of site or department, so managers see any table.",
    )
    .refine(
      (g) => g.some((x) => COLUMN_GROUPINGS.includes(x)),
      "Choose at least one of device type, readiness stage or planned ready week.",
    ),
});
export type OrganisationSettings = z.infer<typeof organisationSettingsSchema>;

/** Stored groupings (JSON text in organisations.manager_groupings), read defensively. */
export function parseStoredGroupings(raw: unknown): Grouping[] {
  try {
    const value = typeof raw === "string" ? JSON.parse(raw) : raw;
    const list = Array.isArray(value)
      ? value.filter((g): g is Grouping => (GROUPINGS as readonly string[]).includes(g))
      : [];
    return GROUPINGS.filter((g) => list.includes(g));
  } catch {
    return [];
  }
}

/** GET /api/v1/readiness query. */
export const readinessApiQuerySchema = z
  .object({
    groupBy: z.enum(["site", "department", "deviceType", "stage"], {
      message: "groupBy must be one of site, department, deviceType, stage.",
    }),
  })
  .strict();
export type ReadinessApiQuery = z.infer<typeof readinessApiQuerySchema>;

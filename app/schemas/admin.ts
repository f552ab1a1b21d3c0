import { z } from "zod";
import { ROLES } from "~/auth/permissions";
import { addDays, isTimeZone } from "~/dates/calendar";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";
import { intents } from "~/schemas/form";

// Shared by the admin forms, their actions and any API that takes the same input.
const optionalId = z.preprocess(
  (v) => (v === "" || v == null ? null : v),
  z.coerce.number().int().positive().nullable(),
);

export const roleAssignmentSchema = z
  .object({
    role: z.enum(ROLES, { message: "Choose a role." }),
    siteId: optionalId,
    departmentId: optionalId,
  })
  .refine((v) => v.role === "admin" || v.siteId != null || v.departmentId != null, {
    message: "Choose a site or department for this role (only admin is organisation-wide).",
    path: ["siteId"],
  })
  .refine((v) => v.role !== "worker" || v.departmentId != null, {
    message: "A worker account belongs to one department.",
    path: ["departmentId"],
  });

export const createUserSchema = z
  .object({
    email: z
      .email({ message: "Enter a valid e-mail address." })
      .max(320)
      .transform((s) => s.toLowerCase()),
    displayName: z.string().trim().min(2, "Enter the person's name (at least 2 characters).").max(200),
  })
  .and(roleAssignmentSchema);

export const updateUserSchema = z.object({
  displayName: z.string().trim().min(2, "Enter the person's name (at least 2 characters).").max(200),
  active: z.preprocess((v) => v === "on" || v === "true" || v === true, z.boolean()),
});

/** An IANA time-zone name ("Europe/Berlin"), as the runtime's copy of the IANA tz database knows it. */
export const timeZoneField = z
  .string({ message: "Time zone: choose one from the list." })
  .trim()
  .refine(isTimeZone, "Time zone: choose a zone name from the list (IANA names such as Europe/London).");

export const siteSchema = z.object({
  code: z
    .string()
    .trim()
    .toUpperCase()
    .regex(/^[A-Z0-9-]{2,20}$/, "Code: 2–20 letters, digits or dashes."),
  name: z.string().trim().min(2, "Enter the site's name.").max(200),
  // Left out or empty: the site takes the organisation's default zone.
  timeZone: z.preprocess((v) => (v === "" || v === null ? undefined : v), timeZoneField.optional()),
});

export const siteTimeZoneSchema = z.object({
  siteId: z.coerce.number({ message: "Site: not found." }).int().positive("Site: not found."),
  timeZone: timeZoneField,
});

export const organisationTimeZoneSchema = z.object({ timeZone: timeZoneField });

export const departmentSchema = z.object({
  siteId: z.coerce.number({ message: "Choose a site." }).int().positive("Choose a site."),
  code: z
    .string()
    .trim()
    .toUpperCase()
    .regex(/^[A-Z0-9-]{2,20}$/, "Code: 2–20 letters, digits or dashes."),
  name: z.string().trim().min(2, "Enter the department's name.").max(200),
});

/** The forms of a user's page: details, add a role, remove a role. */
export const userFormSchema = intents(
  updateUserSchema.extend({ intent: z.literal("update") }),
  roleAssignmentSchema.safeExtend({ intent: z.literal("add-role") }),
  z.object({ intent: z.literal("remove-role"), assignmentId: z.coerce.number().int().positive() }),
);

export const apiKeySchema = z.object({
  name: z.string().trim().min(3, "Name the key after the system that will use it (at least 3 characters).").max(120),
  role: z
    .enum(ROLES, { message: "Choose a role." })
    .refine((r) => r !== "worker", "Workers use their own sign-in, not API keys."),
  siteIds: z.preprocess(
    (v) => (v == null || v === "" ? [] : ([] as unknown[]).concat(v)),
    z.array(z.coerce.number().int().positive()).min(1, "Choose at least one site the key may reach."),
  ),
});

/** The two forms of the API keys page. */
export const apiKeyFormSchema = intents(
  apiKeySchema.extend({ intent: z.literal("create") }),
  z.object({ intent: z.literal("revoke"), keyId: z.coerce.number().int().positive() }),
);

export const consentTextSchema = z.object({
  purpose: z.enum(CONSENT_PURPOSES, { message: "Choose a purpose." }),
  version: z
    .string()
    .trim()
    .regex(/^\d+\.\d+$/, "Version as major.minor, e.g. 1.1."),
  effectiveFrom: z.iso.date({ message: "Enter the date the text takes effect (YYYY-MM-DD)." }),
  body: z.string().trim().min(40, "The consent text must say what is agreed to (at least 40 characters).").max(20000),
});

export const accessLogFilterSchema = z.object({
  worker: z.string().trim().max(40).optional(),
  actor: z.string().trim().max(320).optional(),
  from: z.iso
    .date()
    .optional()
    .or(z.literal("").transform(() => undefined)),
  to: z.iso
    .date()
    .optional()
    .or(z.literal("").transform(() => undefined)),
});

/** The forms of the sites page: add a site or a department, a site's time zone, the default zone. */
export const sitesFormSchema = intents(
  siteSchema.extend({ intent: z.literal("site") }),
  departmentSchema.extend({ intent: z.literal("department") }),
  siteTimeZoneSchema.extend({ intent: z.literal("siteZone") }),
  organisationTimeZoneSchema.extend({ intent: z.literal("orgZone") }),
);

/** A second admin's decision on a pending role or key request. */
export const approvalFormSchema = intents(
  z.object({ intent: z.literal("approve"), requestId: z.coerce.number().int().positive() }),
  z.object({ intent: z.literal("refuse"), requestId: z.coerce.number().int().positive() }),
);

// A site's working hours and closures. Working hours: one span per weekday, both times or neither (not worked).
const optionalTime = z
  .string()
  .trim()
  .optional()
  .transform((s) => s || null)
  .refine((s) => s === null || /^([01]\d|2[0-3]):[0-5]\d$/.test(s), "Use a time like 07:30.");
const WEEKDAY_LABELS = ["Monday", "Tuesday", "Wednesday", "Thursday", "Friday", "Saturday", "Sunday"];
const dayFields: Record<string, typeof optionalTime> = Object.fromEntries(
  WEEKDAY_LABELS.flatMap((_, i) => [
    [`start${i + 1}`, optionalTime],
    [`end${i + 1}`, optionalTime],
  ]),
);

/** The weekdays a working-hours form names, in order (weekdays left empty are not worked). */
export function workingDaysOf(v: Record<string, unknown>): { weekday: number; start: string; end: string }[] {
  return WEEKDAY_LABELS.flatMap((_, i) => {
    const start = v[`start${i + 1}`];
    const end = v[`end${i + 1}`];
    return typeof start === "string" && typeof end === "string" ? [{ weekday: i + 1, start, end }] : [];
  });
}

export const workingHoursSchema = z.object({ intent: z.literal("hours"), ...dayFields }).superRefine((v, ctx) => {
  const row = v as Record<string, string | null>;
  WEEKDAY_LABELS.forEach((label, i) => {
    const start = row[`start${i + 1}`];
    const end = row[`end${i + 1}`];
    if (!start && !end) return;
    if (!start || !end)
      ctx.addIssue({
        code: "custom",
        path: [start ? `end${i + 1}` : `start${i + 1}`],
        message: `${label}: enter both the opening and the closing time, or neither (not worked).`,
      });
    else if (end <= start)
      ctx.addIssue({
        code: "custom",
        path: [`end${i + 1}`],
        message: `${label}: the closing time must be after the opening time.`,
      });
  });
  if (workingDaysOf(row).length === 0)
    ctx.addIssue({
      code: "custom",
      path: ["start1"],
      message: "Enter the hours of at least one weekday, or take the working hours away.",
    });
});

export const closureSchema = z
  .object({
    intent: z.literal("closure"),
    startsOn: z.iso.date({ message: "First day: a date like 2026-12-24." }),
    endsOn: z.iso.date({ message: "Last day: a date like 2026-12-26." }),
    reason: z.string().trim().min(2, "Reason: say why the site is closed (e.g. Christmas Day).").max(300),
  })
  .refine((v) => v.endsOn >= v.startsOn, { path: ["endsOn"], message: "Last day: on or after the first day." })
  .refine((v) => v.endsOn <= addDays(v.startsOn, 366), {
    path: ["endsOn"],
    message: "Last day: a closure is at most a year long.",
  });

/** The largest .ics file a site's closures are imported from. */
export const MAX_ICS_BYTES = 1024 * 1024;

/** The forms of a site's calendar page. */
export const siteCalendarFormSchema = intents(
  workingHoursSchema,
  z.object({ intent: z.literal("clear-hours") }),
  closureSchema,
  z.object({ intent: z.literal("remove-closure"), id: z.coerce.number().int().positive() }),
  z.object({ intent: z.literal("import-ics") }),
);

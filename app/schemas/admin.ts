import { z } from "zod";
import { ROLES } from "~/auth/permissions";
import { isTimeZone } from "~/dates/calendar";
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

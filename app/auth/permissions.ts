// The one role × action table. Every loader, action and API route asks it through requireUser /
// requireApiAccess (guard.server.ts); every other decision — server views and what the UI offers — asks
// can(). No code outside this file decides by a role's name.
export const ROLES = ["assessor", "coordinator", "trainer", "manager", "worker", "admin"] as const;
export type Role = (typeof ROLES)[number];

export const ACTIONS = [
  "workers.read",
  "workers.write",
  "roster.import",
  "consent.manage",
  "assessments.read",
  "assessments.write",
  "norms.manage",
  "forecast.read",
  "forecast.clinical", // the clinical forecast view: z-scores and how each moved the forecast
  "models.manage",
  "progress.read",
  "progress.all", // progress of every worker in scope; without it, only the trainer's own trainees
  "progress.notes", // session notes on the progress page
  "fleet.manage",
  "allocation.run",
  "allocation.publish",
  "sessions.plan",
  "sessions.own",
  "sessions.log",
  "courses.review", // decide on a paused course: resume, resume with conditions, stop
  "readiness.read",
  "self.read",
  "self.consent",
  "self.review",
  "reviews.answer",
  "reviews.plan",
  "admin.users",
  "admin.sites",
  "admin.apikeys",
  "admin.consenttexts",
  "admin.accesslog",
  "admin.outbox",
  "admin.settings",
] as const;
export type Action = (typeof ACTIONS)[number];

const TABLE: Record<Role, readonly Action[]> = {
  assessor: [
    "workers.read",
    "workers.write",
    "roster.import",
    "consent.manage",
    "assessments.read",
    "assessments.write",
    "norms.manage",
    "forecast.read",
    "forecast.clinical",
    "models.manage",
    "progress.read",
    "progress.all",
    "progress.notes",
    "sessions.log",
    "courses.review",
    "reviews.answer",
  ],
  coordinator: [
    "workers.read",
    "forecast.read",
    "progress.read",
    "progress.all",
    "fleet.manage",
    "allocation.run",
    "allocation.publish",
    "sessions.plan",
    "reviews.plan",
  ],
  trainer: ["sessions.own", "sessions.log", "progress.read", "progress.notes"],
  manager: ["readiness.read"],
  worker: ["self.read", "self.consent", "self.review"],
  // Admin runs the system but never sees health data (docs/architecture.md, roles).
  admin: [
    "roster.import",
    "workers.write",
    "admin.users",
    "admin.sites",
    "admin.apikeys",
    "admin.consenttexts",
    "admin.accesslog",
    "admin.outbox",
    "admin.settings",
  ],
};

export function roleAllows(role: Role, action: Action): boolean {
  return TABLE[role].includes(action);
}

/**
 * May `who` do `action`? `who` is anything with roles: a Principal (the roles that granted this request,
 * so the answer fits the request's scope), an AppUser (all of a person's roles: what a page may offer), or
 * the roles a loader handed to the browser.
 */
export function can(who: { readonly roles: readonly Role[] }, action: Action): boolean {
  return who.roles.some((r) => roleAllows(r, action));
}

export function actionsFor(role: Role): readonly Action[] {
  return TABLE[role];
}

// Actions that reach an individual's health data (scores, traces, clinical forecasts, session logs).
const HEALTH_DATA_ACTIONS: readonly Action[] = [
  "assessments.read",
  "assessments.write",
  "forecast.clinical",
  "sessions.log",
  "progress.notes",
];

/** A clinical role reaches health data: granting it (to a person or an API key) takes a second admin. */
export function isClinicalRole(role: Role): boolean {
  return TABLE[role].some((a) => HEALTH_DATA_ACTIONS.includes(a));
}

export const ROLE_LABELS: Record<Role, string> = {
  assessor: "Assessor",
  coordinator: "Coordinator",
  trainer: "Trainer",
  manager: "Manager",
  worker: "Worker",
  admin: "Admin",
};

// Where each role lands after sign-in; order decides the home of a person with several roles.
export const ROLE_HOMES: Record<Role, string> = {
  admin: "/admin",
  assessor: "/assess",
  coordinator: "/coordinate",
  trainer: "/train",
  manager: "/readiness",
  worker: "/me",
};
export const ROLE_PRECEDENCE: Role[] = ["assessor", "coordinator", "trainer", "manager", "admin", "worker"];

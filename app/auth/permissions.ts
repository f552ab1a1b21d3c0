// The one role × action table. Every loader, action and API route asks it through requireUser /
// requireApiAccess (guard.server.ts); the UI only uses it to decide what to show.
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
  "models.manage",
  "progress.read",
  "fleet.manage",
  "allocation.run",
  "allocation.publish",
  "sessions.plan",
  "sessions.own",
  "sessions.log",
  "readiness.read",
  "self.read",
  "self.consent",
  "self.review",
  "reviews.answer",
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
    "models.manage",
    "progress.read",
    "sessions.log",
    "reviews.answer",
  ],
  coordinator: [
    "workers.read",
    "forecast.read",
    "progress.read",
    "fleet.manage",
    "allocation.run",
    "allocation.publish",
    "sessions.plan",
  ],
  trainer: ["sessions.own", "sessions.log", "progress.read"],
  manager: ["readiness.read"],
  worker: ["self.read", "self.consent", "self.review"],
  // Admin runs the system but never sees health data (DESIGN §1).
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

export function actionsFor(role: Role): readonly Action[] {
  return TABLE[role];
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

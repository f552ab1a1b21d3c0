import type { Role } from "~/auth/permissions";

export interface NavItem { to: string; label: string }

// Each role's own navigation. Later capabilities add their entries here.
const NAV: Record<Role, NavItem[]> = {
  assessor: [{ to: "/assess", label: "Assessment home" }],
  coordinator: [{ to: "/coordinate", label: "Coordination home" }],
  trainer: [{ to: "/train", label: "My training days" }],
  manager: [{ to: "/readiness", label: "Department readiness" }],
  worker: [{ to: "/me", label: "My plan and data" }],
  admin: [
    { to: "/admin", label: "Admin overview" },
    { to: "/admin/users", label: "Users and roles" },
    { to: "/admin/sites", label: "Sites and departments" },
    { to: "/admin/api-keys", label: "API keys" },
    { to: "/admin/consent-texts", label: "Consent texts" },
    { to: "/admin/access-log", label: "Access log" },
  ],
};

export function navFor(roles: Role[], showOutbox: boolean): { role: Role; items: NavItem[] }[] {
  return roles.map((role) => ({
    role,
    items: role === "admin" && showOutbox ? [...NAV.admin, { to: "/admin/outbox", label: "Mail outbox (local)" }] : NAV[role],
  }));
}

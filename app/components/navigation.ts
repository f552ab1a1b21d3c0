import type { Role } from "~/auth/permissions";
import { AREAS } from "~/route-groups";
import type { NavItem } from "~/route-groups/types";

export type { NavItem };

// Each role's own navigation: the foundation's entries, then each area's (app/route-groups/index.ts).
const BASE: Record<Role, NavItem[]> = {
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
    { to: "/admin/approvals", label: "Approvals and role audit" },
    { to: "/admin/consent-texts", label: "Consent texts" },
    { to: "/admin/access-log", label: "Access log" },
  ],
};

export function navFor(roles: Role[], showOutbox: boolean): { role: Role; items: NavItem[] }[] {
  return roles.map((role) => {
    const items = [...BASE[role], ...AREAS.flatMap((a) => a.nav[role] ?? [])];
    if (role === "admin" && showOutbox) items.push({ to: "/admin/outbox", label: "Mail outbox (local)" });
    return { role, items };
  });
}

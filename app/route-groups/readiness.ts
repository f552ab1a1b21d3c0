import { type RouteConfigEntry, route } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Readiness board for managers (issue 6): protected aggregates only; organisation settings for admin.
// Routes of this area inside the signed-in shell (paths relative to the site root).
export const routes: RouteConfigEntry[] = [
  route("readiness/sites", "routes/readiness.sites.tsx"),
  route("admin/organisation", "routes/admin.organisation.tsx"),
];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [
  route("readiness/export.xlsx", "routes/readiness.export.ts"),
  route("api/v1/readiness", "routes/api.v1.readiness.ts"),
];
export const nav: NavByRole = {
  manager: [{ to: "/readiness/sites", label: "Site readiness" }],
  admin: [{ to: "/admin/organisation", label: "Organisation settings" }],
};

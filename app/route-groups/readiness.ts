import type { Area } from "./types";

// Readiness board for managers: protected aggregates only; organisation settings for admin.
export const readiness: Area = {
  routes: [
    ["readiness/sites", "routes/readiness.sites.tsx"],
    ["admin/organisation", "routes/admin.organisation.tsx"],
  ],
  outsideShell: [
    ["readiness/export.xlsx", "routes/readiness.export.ts"],
    ["api/v1/readiness", "routes/api.v1.readiness.ts"],
  ],
  nav: {
    manager: [{ to: "/readiness/sites", label: "Site readiness" }],
    admin: [{ to: "/admin/organisation", label: "Organisation settings" }],
  },
};

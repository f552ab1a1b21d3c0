import { type RouteConfigEntry, route } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Assessment area (issue 3): roster, worker list and record, consent, baseline battery, norms, reliability.
export const routes: RouteConfigEntry[] = [
  route("assess/workers", "routes/assess.workers._index.tsx"),
  route("assess/workers/:workerId", "routes/assess.workers.$workerId.tsx"),
  route("assess/workers/:workerId/sessions/:sessionId", "routes/assess.workers.$workerId.sessions.$sessionId.tsx"),
  route("assess/roster", "routes/assess.roster._index.tsx"),
  route("assess/roster/:importId", "routes/assess.roster.$importId.tsx"),
  route("assess/measures", "routes/assess.measures.tsx"),
  route("assess/norms", "routes/assess.norms.tsx"),
  route("assess/reliability", "routes/assess.reliability.tsx"),
];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [route("assess/roster/export.xlsx", "routes/assess.roster.export.ts")];
export const nav: NavByRole = {
  assessor: [
    { to: "/assess/workers", label: "Workers" },
    { to: "/assess/roster", label: "Roster import" },
    { to: "/assess/measures", label: "Measures" },
    { to: "/assess/norms", label: "Norms" },
    { to: "/assess/reliability", label: "Reliability" },
  ],
  admin: [{ to: "/assess/roster", label: "Roster import" }],
};

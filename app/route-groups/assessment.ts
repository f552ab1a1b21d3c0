import type { Area } from "./types";

// Assessment area: roster, worker list and record, consent, baseline battery, norms, reliability.
export const assessment: Area = {
  routes: [
    ["assess/workers", "routes/assess.workers._index.tsx"],
    ["assess/workers/:workerId", "routes/assess.workers.$workerId.tsx"],
    ["assess/workers/:workerId/sessions/:sessionId", "routes/assess.workers.$workerId.sessions.$sessionId.tsx"],
    ["assess/workers/:workerId/courses/:deviceTypeId", "routes/assess.workers.$workerId.courses.$deviceTypeId.tsx"],
    ["assess/roster", "routes/assess.roster._index.tsx"],
    ["assess/roster/:importId", "routes/assess.roster.$importId.tsx"],
    ["assess/measures", "routes/assess.measures.tsx"],
    ["assess/norms", "routes/assess.norms.tsx"],
    ["assess/reliability", "routes/assess.reliability.tsx"],
  ],
  outsideShell: [["assess/roster/export.xlsx", "routes/assess.roster.export.ts"]],
  nav: {
    assessor: [
      { to: "/assess/workers", label: "Workers" },
      { to: "/assess/roster", label: "Roster import" },
      { to: "/assess/measures", label: "Measures" },
      { to: "/assess/norms", label: "Norms" },
      { to: "/assess/reliability", label: "Reliability" },
    ],
    admin: [{ to: "/assess/roster", label: "Roster import" }],
  },
};

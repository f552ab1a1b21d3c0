import { type RouteConfigEntry, route } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Forecast area (issue 4): model workbench and versions, proficiency criteria, worker forecasts, progress.
export const routes: RouteConfigEntry[] = [
  route("models", "routes/models._index.tsx"),
  route("models/new", "routes/models.new.tsx"),
  route("models/:versionId", "routes/models.$versionId.tsx"),
  route("forecast", "routes/forecast._index.tsx"),
  route("forecast/:workerId", "routes/forecast.$workerId.tsx"),
  route("progress", "routes/progress._index.tsx"),
  route("progress/:workerId/:deviceTypeId", "routes/progress.$workerId.$deviceTypeId.tsx"),
];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [
  route("api/v1/workers/:workerId/forecast", "routes/api.v1.workers.$workerId.forecast.ts"),
];
export const nav: NavByRole = {
  assessor: [
    { to: "/forecast", label: "Forecasts" },
    { to: "/progress", label: "Training progress" },
    { to: "/models", label: "Forecast models" },
  ],
  coordinator: [
    { to: "/forecast", label: "Forecasts" },
    { to: "/progress", label: "Training progress" },
  ],
  trainer: [{ to: "/progress", label: "Trainee progress" }],
};

import type { Area } from "./types";

// Forecast area: model workbench and versions, proficiency criteria, worker forecasts, progress.
export const forecast: Area = {
  routes: [
    ["models", "routes/models._index.tsx"],
    ["models/new", "routes/models.new.tsx"],
    ["models/:versionId", "routes/models.$versionId.tsx"],
    ["forecast", "routes/forecast._index.tsx"],
    ["forecast/:workerId", "routes/forecast.$workerId.tsx"],
    ["progress", "routes/progress._index.tsx"],
    ["progress/:workerId/:deviceTypeId", "routes/progress.$workerId.$deviceTypeId.tsx"],
  ],
  outsideShell: [["api/v1/workers/:workerId/forecast", "routes/api.v1.workers.$workerId.forecast.ts"]],
  nav: {
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
  },
};

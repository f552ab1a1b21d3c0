import type { Area } from "./types";

// Allocator: fleet and trainers, trainees' training fields, allocation runs (progress, result,
// what-if comparison), publishing with e-mail and calendar files, schedule export, API.
export const allocation: Area = {
  routes: [
    ["coordinate/fleet", "routes/coordinate.fleet.tsx"],
    ["coordinate/trainers", "routes/coordinate.trainers._index.tsx"],
    ["coordinate/trainers/:trainerId", "routes/coordinate.trainers.$trainerId.tsx"],
    ["coordinate/trainees", "routes/coordinate.trainees._index.tsx"],
    ["coordinate/trainees/:workerId", "routes/coordinate.trainees.$workerId.tsx"],
    ["coordinate/runs", "routes/coordinate.runs._index.tsx"],
    ["coordinate/runs/compare", "routes/coordinate.runs.compare.tsx"],
    ["coordinate/runs/:runId", "routes/coordinate.runs.$runId.tsx"],
    ["coordinate/schedule", "routes/coordinate.schedule.tsx"],
  ],
  outsideShell: [
    ["coordinate/runs/:runId/status", "routes/coordinate.runs.$runId.status.ts"],
    ["coordinate/schedule.xlsx", "routes/coordinate.schedule-export.ts"],
    ["api/v1/allocation-runs", "routes/api.v1.allocation-runs.ts"],
    ["api/v1/allocation-runs/:runId", "routes/api.v1.allocation-runs.$runId.ts"],
  ],
  nav: {
    coordinator: [
      { to: "/coordinate/runs", label: "Allocation runs" },
      { to: "/coordinate/schedule", label: "Schedule" },
      { to: "/coordinate/fleet", label: "Fleet" },
      { to: "/coordinate/trainers", label: "Trainers" },
      { to: "/coordinate/trainees", label: "Trainees" },
    ],
  },
};

import { type RouteConfigEntry, route } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Allocator (issue 5): fleet and trainers, trainees' training fields, allocation runs (progress, result,
// what-if comparison), publishing with e-mail and calendar files, schedule export, API.
export const routes: RouteConfigEntry[] = [
  route("coordinate/fleet", "routes/coordinate.fleet.tsx"),
  route("coordinate/trainers", "routes/coordinate.trainers._index.tsx"),
  route("coordinate/trainers/:trainerId", "routes/coordinate.trainers.$trainerId.tsx"),
  route("coordinate/trainees", "routes/coordinate.trainees._index.tsx"),
  route("coordinate/trainees/:workerId", "routes/coordinate.trainees.$workerId.tsx"),
  route("coordinate/runs", "routes/coordinate.runs._index.tsx"),
  route("coordinate/runs/compare", "routes/coordinate.runs.compare.tsx"),
  route("coordinate/runs/:runId", "routes/coordinate.runs.$runId.tsx"),
];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [
  route("coordinate/runs/:runId/status", "routes/coordinate.runs.$runId.status.ts"),
  route("coordinate/schedule.xlsx", "routes/coordinate.schedule-export.ts"),
  route("api/v1/allocation-runs", "routes/api.v1.allocation-runs.ts"),
  route("api/v1/allocation-runs/:runId", "routes/api.v1.allocation-runs.$runId.ts"),
];
export const nav: NavByRole = {
  coordinator: [
    { to: "/coordinate/runs", label: "Allocation runs" },
    { to: "/coordinate/fleet", label: "Fleet" },
    { to: "/coordinate/trainers", label: "Trainers" },
    { to: "/coordinate/trainees", label: "Trainees" },
  ],
};

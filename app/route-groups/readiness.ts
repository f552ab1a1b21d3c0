import type { RouteConfigEntry } from "@react-router/dev/routes";
import type { NavByRole } from "./types";

// Routes of this area inside the signed-in shell (paths relative to the site root).
export const routes: RouteConfigEntry[] = [];
// Resource routes outside the shell: exports, api/v1/*.
export const outsideShell: RouteConfigEntry[] = [];
export const nav: NavByRole = {};

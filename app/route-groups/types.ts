import type { Role } from "~/auth/permissions";

export interface NavItem {
  to: string;
  label: string;
}
export type NavByRole = Partial<Record<Role, NavItem[]>>;

/** A route as plain data: [URL path relative to the site root, route module relative to app/]. */
export type RouteSpec = readonly [path: string, file: string];

/**
 * One area of the product. Plain data with no build-time imports, so the route table (app/routes.ts)
 * and the signed-in shell's navigation both read it.
 */
export interface Area {
  /** Routes inside the signed-in shell. */
  routes: RouteSpec[];
  /** Resource routes outside the shell: exports, api/v1/*. */
  outsideShell: RouteSpec[];
  /** Navigation entries per role. */
  nav: NavByRole;
}

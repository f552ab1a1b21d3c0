import type { Role } from "./permissions";

// Which part of the organisation a principal may see for one action. Organisation-wide assignments
// (no site, no department) see every site.
export interface Scope {
  allSites: boolean;
  siteIds: number[];
  departmentIds: number[];
}

export function scopeFrom(
  assignments: { role: Role; siteId: number | null; departmentId: number | null }[],
  roles: Role[],
): Scope {
  const relevant = assignments.filter((a) => roles.includes(a.role));
  const scope: Scope = { allSites: false, siteIds: [], departmentIds: [] };
  for (const a of relevant) {
    if (a.departmentId != null) scope.departmentIds.push(a.departmentId);
    else if (a.siteId != null) scope.siteIds.push(a.siteId);
    else scope.allSites = true;
  }
  scope.siteIds = [...new Set(scope.siteIds)].sort((x, y) => x - y);
  scope.departmentIds = [...new Set(scope.departmentIds)].sort((x, y) => x - y);
  return scope;
}

import type { Scope } from "~/auth/scope";
import { type Db, db } from "~/db.server";

export interface SiteRow {
  id: number;
  code: string;
  name: string;
}
export interface DepartmentRow {
  id: number;
  siteId: number;
  code: string;
  name: string;
  siteName: string;
}

export async function listSites(k: Db = db()): Promise<SiteRow[]> {
  return k("sites").select("id", "code", "name").orderBy("name");
}

export async function listDepartments(k: Db = db()): Promise<DepartmentRow[]> {
  const rows = await k("departments as d")
    .join("sites as s", "s.id", "d.site_id")
    .select("d.id", "d.site_id", "d.code", "d.name", "s.name as site_name")
    .orderBy([{ column: "s.name" }, { column: "d.name" }]);
  return rows.map((r) => ({ id: r.id, siteId: r.site_id, code: r.code, name: r.name, siteName: r.site_name }));
}

export async function sitesInScope(scope: Scope, k: Db = db()): Promise<SiteRow[]> {
  const all = await listSites(k);
  if (scope.allSites) return all;
  const deptSites = scope.departmentIds.length
    ? await k("departments").whereIn("id", scope.departmentIds).pluck("site_id")
    : [];
  const ids = new Set([...scope.siteIds, ...deptSites]);
  return all.filter((s) => ids.has(s.id));
}

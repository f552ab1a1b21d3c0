import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import { DEFAULT_TIME_ZONE, type Instant, instantToWallClock, type WallClock } from "~/dates";
import { type Db, db } from "~/db.server";

export interface SiteRow {
  id: number;
  code: string;
  name: string;
  timeZone: string;
}
export interface DepartmentRow {
  id: number;
  siteId: number;
  code: string;
  name: string;
  siteName: string;
}

export async function listSites(k: Db = db()): Promise<SiteRow[]> {
  const rows = await k("sites").select("id", "code", "name", "time_zone").orderBy(["name", "id"]);
  return rows.map((r) => ({ id: r.id, code: r.code, name: r.name, timeZone: r.time_zone }));
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

// ── time zones: a site's wall-clock times are read in its zone; the organisation's zone is the default ──

export async function organisationTimeZone(k: Db = db()): Promise<string> {
  const org = await k("organisations").orderBy("id").first("time_zone");
  return org?.time_zone ?? DEFAULT_TIME_ZONE;
}

/** The zone of the worker's site (sessions happen at the worker's own site). */
export async function workerTimeZone(workerId: number, k: Db = db()): Promise<string> {
  const r = await k("workers as w")
    .join("sites as s", "s.id", "w.site_id")
    .where("w.id", workerId)
    .first("s.time_zone");
  return r?.time_zone ?? (await organisationTimeZone(k));
}

/** The worker's site wall-clock time at an instant (to compare with stored session times). */
export async function workerWallClockAt(workerId: number, at: Instant | Date, k: Db = db()): Promise<WallClock> {
  return instantToWallClock(at, await workerTimeZone(workerId, k));
}

/**
 * The zone instants are shown in for a viewer: their site's zone when their scope reaches one site (a worker's
 * department, a site's staff), else the organisation's.
 */
export async function viewerTimeZone(p: Principal, k: Db = db()): Promise<string> {
  const sites = new Set(p.scope.siteIds);
  if (!p.scope.allSites && p.scope.departmentIds.length)
    for (const id of await k("departments").whereIn("id", p.scope.departmentIds).pluck("site_id")) sites.add(id);
  if (!p.scope.allSites && sites.size === 1) {
    const r = await k("sites")
      .where({ id: [...sites][0] })
      .first("time_zone");
    if (r) return r.time_zone;
  }
  return organisationTimeZone(k);
}

/** Every site's zone by site id. */
export async function siteTimeZones(k: Db = db()): Promise<Map<number, string>> {
  return new Map((await k("sites").select("id", "time_zone")).map((r) => [r.id, r.time_zone]));
}

/** The zone of each worker's site, by worker id. */
export async function workerTimeZones(workerIds: number[], k: Db = db()): Promise<Map<number, string>> {
  const out = new Map<number, string>();
  for (let i = 0; i < workerIds.length; i += 500)
    for (const r of await k("workers as w")
      .join("sites as s", "s.id", "w.site_id")
      .whereIn("w.id", workerIds.slice(i, i + 500))
      .select("w.id", "s.time_zone"))
      out.set(r.id, r.time_zone);
  return out;
}

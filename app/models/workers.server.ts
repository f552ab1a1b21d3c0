import type { Knex } from "knex";
import type { Scope } from "~/auth/scope";
import { type Db, db } from "~/db.server";

/** `workers` joined with the worker's site (alias `s`) and department (alias `d`). */
export function workersWithPlace(k: Db = db()) {
  return k("workers")
    .join("sites as s", "s.id", "workers.site_id")
    .join("departments as d", "d.id", "workers.department_id");
}

/** The columns that name a worker on staff pages (with `workersWithPlace`): number, names, stage, site, department. */
export const WORKER_HEADER = [
  "workers.id",
  "workers.employee_number",
  "workers.given_name",
  "workers.family_name",
  "workers.stage",
  "s.name as site",
  "d.name as department",
];

// Restricts a query on `workers` (aliased) to a principal's scope. An empty scope matches nothing.
export function whereWorkerInScope(q: Knex.QueryBuilder, scope: Scope, alias = "workers"): Knex.QueryBuilder {
  if (scope.allSites) return q;
  return q.where((w) => {
    w.whereRaw("1 = 0");
    if (scope.siteIds.length) w.orWhereIn(`${alias}.site_id`, scope.siteIds);
    if (scope.departmentIds.length) w.orWhereIn(`${alias}.department_id`, scope.departmentIds);
  });
}

export async function stageCountsBySite(scope: Scope) {
  const q = db()("workers")
    .join("sites as s", "s.id", "workers.site_id")
    .select("s.name as site", "workers.stage")
    .count<{ site: string; stage: string; n: number }[]>({ n: "*" })
    .groupBy("s.name", "workers.stage");
  const rows: { site: string; stage: string; n: number | string }[] = await whereWorkerInScope(q, scope);
  return rows.map((r) => ({ site: r.site, stage: r.stage, n: Number(r.n) }));
}

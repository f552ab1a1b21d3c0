import type { Knex } from "knex";
import type { Scope } from "~/auth/scope";
import { db } from "~/db.server";
import { CONSENT_PURPOSES } from "~/domain/consent-purposes";
import { consentState } from "./consent.server";

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

export async function ownWorkerRecord(workerId: number) {
  const w = await db()("workers as w")
    .join("sites as s", "s.id", "w.site_id")
    .join("departments as d", "d.id", "w.department_id")
    .where("w.id", workerId)
    .first(
      "w.id",
      "w.employee_number",
      "w.given_name",
      "w.family_name",
      "w.email",
      "w.stage",
      "s.name as site",
      "d.name as department",
    );
  if (!w) return null;
  const state = await consentState(workerId);
  const latest: Record<string, { status: string; at: string; version: string }> = {};
  for (const p of CONSENT_PURPOSES) {
    const c = state[p];
    if (c.status !== "none") latest[p] = { status: c.status, at: c.at ?? "", version: c.version ?? "" };
  }
  return {
    employeeNumber: w.employee_number as string,
    name: `${w.given_name} ${w.family_name}`,
    email: w.email as string | null,
    stage: w.stage as string,
    site: w.site as string,
    department: w.department as string,
    consent: latest,
  };
}

import type { Principal } from "~/auth/guard.server";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { clientAddress } from "~/http/client.server";
import type { TableQuery } from "~/schemas/table-query";
import { paged } from "./paging.server";

// Every staff read of an individual's health data is recorded here (docs/consent-and-disclosure.md); the worker sees it.
export type HealthResource =
  | "assessment"
  | "trace"
  | "forecast"
  | "progress"
  | "plan"
  | "sessions"
  | "profile"
  | "export";

export async function recordAccess(
  principal: Principal,
  request: Request,
  workerIds: number | number[],
  resource: HealthResource,
  action: "read" | "export" | "undo" = "read",
  k: Db = db(),
): Promise<void> {
  const ids = ([] as number[]).concat(workerIds);
  if (ids.length === 0) return;
  const url = new URL(request.url);
  const at = nowInstant();
  const ip = clientAddress(request);
  const rows = ids.map((workerId) => ({
    at,
    worker_id: workerId,
    resource,
    action,
    route: `${url.pathname}`.slice(0, 300),
    ip,
    actor_user_id: principal.kind === "user" ? principal.user.id : null,
    api_key_id: principal.kind === "apiKey" ? principal.key.id : null,
    actor_role: principal.roles[0] ?? null,
  }));
  for (let i = 0; i < rows.length; i += 200) await k("access_log").insert(rows.slice(i, i + 200));
}

export interface AccessLogRow {
  id: number;
  at: string;
  actor: string;
  actorRole: string | null;
  employeeNumber: string;
  resource: string;
  action: string;
  route: string | null;
}

function baseQuery(filters: { worker?: string; actor?: string; from?: string; to?: string }) {
  const q = db()("access_log as a")
    .join("workers as w", "w.id", "a.worker_id")
    .leftJoin("users as u", "u.id", "a.actor_user_id")
    .leftJoin("api_keys as k", "k.id", "a.api_key_id")
    .select(
      "a.id",
      "a.at",
      "a.actor_role",
      "a.resource",
      "a.action",
      "a.route",
      "w.employee_number",
      "u.display_name",
      "u.email",
      "k.name as key_name",
    );
  if (filters.worker) q.where("w.employee_number", filters.worker.trim().toUpperCase());
  if (filters.actor)
    q.where((w) =>
      w
        .whereRaw("lower(u.email) like ?", [`%${filters.actor!.toLowerCase()}%`])
        .orWhereRaw("lower(u.display_name) like ?", [`%${filters.actor!.toLowerCase()}%`]),
    );
  if (filters.from) q.where("a.at", ">=", `${filters.from}T00:00:00.000Z`);
  if (filters.to) q.where("a.at", "<=", `${filters.to}T23:59:59.999Z`);
  return q;
}

function toRow(r: Record<string, unknown>): AccessLogRow {
  return {
    id: r.id as number,
    at: String(r.at),
    actorRole: (r.actor_role as string) ?? null,
    actor: r.display_name ? `${r.display_name} <${r.email}>` : r.key_name ? `API key: ${r.key_name}` : "unknown",
    employeeNumber: r.employee_number as string,
    resource: r.resource as string,
    action: r.action as string,
    route: (r.route as string) ?? null,
  };
}

export function listAccessLog(q: TableQuery, filters: { worker?: string; actor?: string; from?: string; to?: string }) {
  return paged(
    baseQuery(filters),
    q,
    { at: "a.at", worker: "w.employee_number", resource: "a.resource" },
    "at",
    "a.id",
    toRow,
  );
}

export async function exportAccessLog(
  filters: { worker?: string; actor?: string; from?: string; to?: string },
  limit = 100_000,
): Promise<AccessLogRow[]> {
  return (await baseQuery(filters).orderBy("a.at", "desc").limit(limit)).map(toRow);
}

/** For the worker's own record: who read my data, when. */
export async function accessLogForWorker(workerId: number, limit = 500) {
  const rows = await db()("access_log as a")
    .leftJoin("users as u", "u.id", "a.actor_user_id")
    .leftJoin("api_keys as k", "k.id", "a.api_key_id")
    .where("a.worker_id", workerId)
    .select("a.at", "a.actor_role", "a.resource", "a.action", "u.display_name", "k.name as key_name")
    .orderBy("a.at", "desc")
    .limit(limit);
  return rows.map((r) => ({
    at: String(r.at),
    who: r.display_name ?? (r.key_name ? `System: ${r.key_name}` : "unknown"),
    role: r.actor_role,
    resource: r.resource,
    action: r.action,
  }));
}

import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import type { AllocationPlan } from "~/compute/allocation";
import { type Db, db, type Row } from "~/db.server";
import type { RunParameters } from "~/schemas/allocation";
import { buildProblem, type ProblemSnapshot } from "./allocation-problem.server";

// Allocation runs: parameters, the problem snapshot the solver sees, progress and the result.
// The solve itself runs in app/jobs (worker thread); this module only reads and writes rows.

export type RunStatus = "queued" | "running" | "done" | "failed";

export interface RunRow {
  id: number;
  label: string | null;
  baseRunId: number | null;
  parameters: RunParameters & { pool: { siteIds: number[] } };
  status: RunStatus;
  phase: string | null;
  fraction: number;
  error: string | null;
  createdBy: string | null;
  createdAt: string;
  startedAt: string | null;
  finishedAt: string | null;
  version: number;
  publishedAt: string | null;
  publishedBy: string | null;
  publishedPlanVersion: number | null;
}

export interface RunDetail extends RunRow {
  snapshot: ProblemSnapshot | null;
  plan: AllocationPlan | null;
}

function toRow(r: Row): RunRow {
  return {
    id: r.id,
    label: r.label ?? null,
    baseRunId: r.base_run_id ?? null,
    parameters: JSON.parse(r.parameters),
    status: r.status,
    phase: r.phase ?? null,
    fraction: Number(r.fraction ?? 0),
    error: r.error ?? null,
    createdBy: r.created_by_name ?? null,
    createdAt: String(r.created_at),
    startedAt: r.started_at ? String(r.started_at) : null,
    finishedAt: r.finished_at ? String(r.finished_at) : null,
    version: Number(r.version),
    publishedAt: r.published_at ? String(r.published_at) : null,
    publishedBy: r.published_by_name ?? null,
    publishedPlanVersion: r.published_plan_version == null ? null : Number(r.published_plan_version),
  };
}

/** A run is visible when every site of its pool is inside the reader's scope. */
function visible(scope: Scope, run: RunRow): boolean {
  return scope.allSites || run.parameters.pool.siteIds.every((s) => scope.siteIds.includes(s));
}

function baseQuery(k: Db) {
  return k("allocation_runs as r")
    .leftJoin("users as c", "c.id", "r.created_by")
    .leftJoin("users as p", "p.id", "r.published_by")
    .select(
      "r.id",
      "r.label",
      "r.base_run_id",
      "r.parameters",
      "r.status",
      "r.phase",
      "r.fraction",
      "r.error",
      "r.created_at",
      "r.started_at",
      "r.finished_at",
      "r.version",
      "r.published_at",
      "r.published_plan_version",
      "c.display_name as created_by_name",
      "p.display_name as published_by_name",
    );
}

export async function listRuns(scope: Scope, limit = 50): Promise<RunRow[]> {
  const rows = await baseQuery(db())
    .orderBy("r.id", "desc")
    .limit(limit * 3);
  return rows
    .map(toRow)
    .filter((r) => visible(scope, r))
    .slice(0, limit);
}

export async function getRunStatus(scope: Scope, id: number, k: Db = db()): Promise<RunRow | null> {
  const r = await baseQuery(k).where("r.id", id).first();
  if (!r) return null;
  const row = toRow(r);
  return visible(scope, row) ? row : null;
}

export async function getRun(scope: Scope, id: number, k: Db = db()): Promise<RunDetail | null> {
  const row = await getRunStatus(scope, id, k);
  if (!row) return null;
  const extra = await k("allocation_runs").where({ id }).first("problem", "result");
  return {
    ...row,
    snapshot: extra?.problem ? JSON.parse(extra.problem) : null,
    plan: extra?.result ? JSON.parse(extra.result) : null,
  };
}

export class RunInputError extends Error {
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}

/**
 * Creates a queued run: the pool is restricted to the principal's sites, the problem snapshot is built now
 * (so the solve sees the data as they were when the coordinator pressed Start). One transaction.
 */
export async function createRun(principal: Principal, params: RunParameters): Promise<number> {
  const scope = principal.scope;
  return db().transaction(async (trx) => {
    const allSites = (await trx("sites").select("id").orderBy("id")).map((s) => s.id as number);
    for (const s of params.pool.siteIds)
      if (!allSites.includes(s)) throw new RunInputError("siteIds", `Site ${s} does not exist.`);
    const inScope = allSites.filter((s) => scope.allSites || scope.siteIds.includes(s));
    const siteIds = params.pool.siteIds.length ? params.pool.siteIds.filter((s) => inScope.includes(s)) : inScope;
    if (params.pool.siteIds.some((s) => !inScope.includes(s)))
      throw new RunInputError("siteIds", "The pool includes a site outside your scope.");
    if (siteIds.length === 0) throw new RunInputError("siteIds", "Your scope has no sites to plan for.");
    if (params.baseRunId && !(await trx("allocation_runs").where({ id: params.baseRunId }).first("id")))
      throw new RunInputError("baseRunId", "The run to compare with does not exist.");
    const stored: RunParameters = { ...params, pool: { ...params.pool, siteIds } };
    const snapshot = await buildProblem(stored, scope, trx);
    const [row] = await trx("allocation_runs")
      .insert({
        label: params.label ?? null,
        base_run_id: params.baseRunId ?? null,
        parameters: JSON.stringify(stored),
        status: "queued",
        phase: "queued",
        fraction: 0,
        problem: JSON.stringify(snapshot),
        created_by: principal.kind === "user" ? principal.user.id : null,
        created_at: new Date().toISOString(),
        version: 1,
      })
      .returning("id");
    return typeof row === "object" ? row.id : row;
  });
}

// Written by the job runner.
export async function markRunning(id: number): Promise<ProblemSnapshot | null> {
  return db().transaction(async (trx) => {
    const r = await trx("allocation_runs").where({ id, status: "queued" }).first("problem");
    if (!r) return null;
    await trx("allocation_runs")
      .where({ id })
      .update({
        status: "running",
        phase: "starting",
        fraction: 0,
        started_at: new Date().toISOString(),
        version: db().raw("version + 1"),
      });
    return JSON.parse(r.problem) as ProblemSnapshot;
  });
}

export async function writeProgress(id: number, phase: string, fraction: number): Promise<void> {
  await db()("allocation_runs")
    .where({ id, status: "running" })
    .update({ phase: phase.slice(0, 60), fraction: Math.max(0, Math.min(1, fraction)) });
}

export async function markDone(id: number, plan: AllocationPlan): Promise<void> {
  await db()("allocation_runs")
    .where({ id })
    .update({
      status: "done",
      phase: "done",
      fraction: 1,
      result: JSON.stringify(plan),
      finished_at: new Date().toISOString(),
      version: db().raw("version + 1"),
    });
}

export async function markFailed(id: number, message: string): Promise<void> {
  await db()("allocation_runs")
    .where({ id })
    .update({
      status: "failed",
      phase: "failed",
      error: message.slice(0, 2000),
      finished_at: new Date().toISOString(),
      version: db().raw("version + 1"),
    });
}

/** On server start: runs left "running" by a stopped server failed; queued ones are picked up again. */
export async function recoverRuns(): Promise<number[]> {
  await db()("allocation_runs").where({ status: "running" }).update({
    status: "failed",
    phase: "failed",
    error: "The server stopped while this run was solving; start it again.",
    finished_at: new Date().toISOString(),
  });
  return (await db()("allocation_runs").where({ status: "queued" }).orderBy("id").select("id")).map(
    (r) => r.id as number,
  );
}

import type { Knex } from "knex";
import type { Principal } from "~/auth/guard.server";
import type { Scope } from "~/auth/scope";
import type { AllocationPlan } from "~/compute/allocation";
import { type RunSummary, runSummary } from "~/compute/placement";
import { replanSummary } from "~/compute/replan";
import { instantAgo, nowInstant } from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import { UserError } from "~/errors";
import { enqueueAllocation } from "~/jobs/queue.server";
import type { RunParameters, StoredRunParameters } from "~/schemas/allocation";
import { buildProblem, type ProblemSnapshot } from "./allocation-problem.server";
import { fromPublishedPlan } from "./replan.server";

// Allocation runs: parameters, the problem snapshot the solver sees, progress and the result.
// The solve itself runs in app/jobs (worker thread); this module reads and writes rows and hands new runs to
// the queue (app/jobs/queue.server.ts).

export type RunStatus = "queued" | "running" | "done" | "failed";

export interface RunRow {
  id: number;
  label: string | null;
  baseRunId: number | null;
  parameters: StoredRunParameters & { pool: { siteIds: number[] } };
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
  /** How many times an instance claimed the run (more than 1: an instance stopped while solving it). */
  attempts: number;
  /** ready after placement / pool and value, stored when the run finished (null before, or for older runs) */
  summary: RunSummary | null;
  /** when the run was archived (hidden from the runs list by default); null when it is not */
  archivedAt: string | null;
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
    attempts: Number(r.attempts ?? 0),
    summary: r.summary ? JSON.parse(r.summary) : null,
    archivedAt: r.archived_at ? String(r.archived_at) : null,
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
      "r.attempts",
      "r.summary",
      "r.archived_at",
      "c.display_name as created_by_name",
      "p.display_name as published_by_name",
    );
}

/** Runs newest first; archived ones only when asked for. */
export async function listRuns(scope: Scope, limit = 50, opts: { includeArchived?: boolean } = {}): Promise<RunRow[]> {
  const q = baseQuery(db())
    .orderBy("r.id", "desc")
    .limit(limit * 3);
  if (!opts.includeArchived) q.whereNull("r.archived_at");
  const rows = await q;
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

/**
 * Creates a queued run: the pool is restricted to the principal's sites, the problem snapshot is built now
 * (so the solve sees the data as they were when the coordinator pressed Start). One transaction.
 */
async function createRun(principal: Principal, params: RunParameters): Promise<number> {
  const scope = principal.scope;
  return db().transaction(async (trx) => {
    const allSites = (await trx("sites").select("id").orderBy("id")).map((s) => s.id);
    for (const s of params.pool.siteIds)
      if (!allSites.includes(s)) throw new UserError(`Site ${s} does not exist.`, { field: "siteIds" });
    const inScope = allSites.filter((s) => scope.allSites || scope.siteIds.includes(s));
    const siteIds = params.pool.siteIds.length ? params.pool.siteIds.filter((s) => inScope.includes(s)) : inScope;
    if (params.pool.siteIds.some((s) => !inScope.includes(s)))
      throw new UserError("The pool includes a site outside your scope.", { field: "siteIds" });
    if (siteIds.length === 0) throw new UserError("Your scope has no sites to plan for.", { field: "siteIds" });
    if (params.baseRunId && !(await trx("allocation_runs").where({ id: params.baseRunId }).first("id")))
      throw new UserError("The run to compare with does not exist.", { field: "baseRunId" });
    const pooled: RunParameters = { ...params, pool: { ...params.pool, siteIds } };
    const built = await buildProblem(pooled, scope, trx);
    const { fromPublished } = pooled;
    const snapshot = fromPublished ? await fromPublishedPlan(built, { ...pooled, fromPublished }, trx) : built;
    // Kept with the run: the organisation's planning quantile the hours needed were taken at.
    const stored: StoredRunParameters = { ...pooled, planningQuantile: built.planningQuantile };
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
        created_at: nowInstant(),
        version: 1,
      })
      .returning("id");
    return typeof row === "object" ? row.id : row;
  });
}

/** How many runs in scope are archived (the runs list offers to show them). */
export async function archivedCount(scope: Scope): Promise<number> {
  const rows = await baseQuery(db()).whereNotNull("r.archived_at");
  return rows.map(toRow).filter((r) => visible(scope, r)).length;
}

/** Archives or un-archives a run in the principal's scope; the run of the published plan stays in the list. */
export async function setArchived(principal: Principal, id: number, archived: boolean): Promise<void> {
  await db().transaction(async (trx) => {
    const run = await getRunStatus(principal.scope, id, trx);
    if (!run) throw new UserError("No such allocation run in your scope.", { status: 404 });
    if (archived) {
      const state = await trx("published_plan_state").where({ id: 1 }).first("current_run_id");
      if (state?.current_run_id === id)
        throw new UserError("This run is the published plan, so it stays in the list.", { status: 409 });
    }
    await trx("allocation_runs")
      .where({ id })
      .update({ archived_at: archived ? nowInstant() : null, version: trx.raw("version + 1") });
  });
}

/** The head of a solver's plan as the run page and the API show it. */
export function planSummary(plan: AllocationPlan) {
  return {
    status: plan.status,
    objective: plan.objective,
    bound: plan.bound,
    gap: plan.gap ?? null,
    message: plan.message ?? null,
  };
}

/**
 * What the UI and the API call to start a run: creates the queued run (one transaction) and hands it to the
 * job queue. Input problems are UserErrors naming the field (answered by app/forms.server.ts).
 */
export async function startRun(principal: Principal, params: RunParameters): Promise<number> {
  const id = await createRun(principal, params);
  // The run is committed; if handing it over fails, the queue's sweep picks queued runs up again.
  await enqueueAllocation(id).catch((e) => console.error(`allocation run ${id}: enqueue failed, the sweep retries`, e));
  return id;
}

// ── Claims, written by the job runner (app/jobs) ─────────────────────────────────────────────────
// Every state change below is one conditional UPDATE: a run is claimed only while queued, and only the
// instance holding the claim (claimed_by) may write progress, the result or a failure. A finished run never
// keeps an error text; a run another instance owns is never overwritten.

function isPg(k: Db): boolean {
  return /^(pg|postgres)/.test(String(k.client.config.client));
}

/** "Now" for heartbeats: the database's clock on PostgreSQL (instances' clocks may differ), ours on SQLite. */
function nowValue(k: Db) {
  return isPg(k) ? k.raw("now()") : nowInstant();
}
function agoValue(k: Db, ms: number) {
  return isPg(k) ? k.raw("now() - (? * interval '1 millisecond')", [ms]) : instantAgo(ms);
}

/** Claims a queued run for this instance (one conditional update); null when it is not queued any more. */
export async function claimRun(id: number, instanceId: string, k: Db = db()): Promise<ProblemSnapshot | null> {
  const n = await k("allocation_runs")
    .where({ id, status: "queued" })
    .update({
      status: "running",
      phase: "starting",
      fraction: 0,
      error: null,
      claimed_by: instanceId.slice(0, 120),
      heartbeat_at: nowValue(k),
      started_at: nowInstant(),
      attempts: k.raw("attempts + 1"),
      version: k.raw("version + 1"),
    });
  if (n !== 1) return null;
  const r = await k("allocation_runs")
    .where({ id, claimed_by: instanceId.slice(0, 120) })
    .first("problem");
  return r?.problem ? (JSON.parse(r.problem) as ProblemSnapshot) : null;
}

/** The oldest queued runs, for runners that take work from the table itself (SQLite) and for the sweep. */
export async function queuedRunIds(k: Db = db(), olderThanMs = 0, limit = 20): Promise<number[]> {
  const q = k("allocation_runs").where({ status: "queued" }).orderBy("id").limit(limit);
  if (olderThanMs > 0) q.where("created_at", "<", instantAgo(olderThanMs));
  return (await q.select("id")).map((r) => r.id);
}

function owned(k: Db, id: number, instanceId: string) {
  return k("allocation_runs").where({ id, status: "running", claimed_by: instanceId.slice(0, 120) });
}

/** The solving instance says it is alive; false when the run is no longer its own (then it stops solving). */
export async function heartbeat(id: number, instanceId: string, k: Db = db()): Promise<boolean> {
  return (await owned(k, id, instanceId).update({ heartbeat_at: nowValue(k) })) === 1;
}

export async function writeProgress(
  id: number,
  instanceId: string,
  phase: string,
  fraction: number,
  k: Db = db(),
): Promise<boolean> {
  const n = await owned(k, id, instanceId).update({
    phase: phase.slice(0, 60),
    fraction: Math.max(0, Math.min(1, fraction)),
    heartbeat_at: nowValue(k),
  });
  return n === 1;
}

/** Ready after placement / pool and value for the runs list; a run is marked done even if this cannot be made. */
async function summaryFor(id: number, plan: AllocationPlan, k: Db): Promise<RunSummary | null> {
  const stored = await k("allocation_runs").where({ id }).first("problem");
  const snap: ProblemSnapshot | null = stored?.problem ? JSON.parse(stored.problem) : null;
  if (!snap?.calendar?.devices || !snap.problem?.workers) return null;
  try {
    const priorities = new Map(snap.problem.workers.map((w) => [w.id, w.priority]));
    const pool = snap.problem.workers.length;
    return snap.replan
      ? replanSummary(snap.calendar, snap.commitments ?? [], plan, snap.replan, priorities, pool)
      : runSummary(snap.calendar, snap.commitments ?? [], plan, priorities, pool);
  } catch (e) {
    console.error(`allocation run ${id}: no summary for the runs list`, e);
    return null;
  }
}

export async function markDone(id: number, instanceId: string, plan: AllocationPlan, k: Db = db()): Promise<boolean> {
  const summary = await summaryFor(id, plan, k);
  const n = await owned(k, id, instanceId).update({
    status: "done",
    phase: "done",
    fraction: 1,
    error: null,
    result: JSON.stringify(plan),
    summary: summary ? JSON.stringify(summary) : null,
    finished_at: nowInstant(),
    version: k.raw("version + 1"),
  });
  return n === 1;
}

export async function markFailed(id: number, instanceId: string, message: string, k: Db = db()): Promise<boolean> {
  const n = await owned(k, id, instanceId).update({
    status: "failed",
    phase: "failed",
    error: message.slice(0, 2000),
    finished_at: nowInstant(),
    version: k.raw("version + 1"),
  });
  return n === 1;
}

/** The owner gives a run back (its instance is shutting down): queued again for any instance. */
export async function releaseRun(id: number, instanceId: string, k: Db = db()): Promise<boolean> {
  const n = await owned(k, id, instanceId).update({
    status: "queued",
    phase: "queued again (instance stopped)",
    fraction: 0,
    claimed_by: null,
    heartbeat_at: null,
    version: k.raw("version + 1"),
  });
  return n === 1;
}

export interface StaleRecovery {
  requeued: number[];
  failed: number[];
}

/**
 * Runs whose solving instance stopped answering (no heartbeat for staleMs) go back to the queue, or fail
 * with the reason once they were claimed maxAttempts times. Only the heartbeat's age decides: a live run
 * of another instance is never touched, also not at start-up. Each change repeats the stale condition and
 * the claim it saw, so two instances recovering at once change a run only once.
 */
export async function recoverStaleRuns(
  opts: { staleMs: number; maxAttempts: number },
  k: Db = db(),
): Promise<StaleRecovery> {
  const stale = (q: Knex.QueryBuilder) =>
    q
      .where("status", "running")
      .where((w) =>
        w
          .where("heartbeat_at", "<", agoValue(k, opts.staleMs))
          .orWhere((x) => x.whereNull("heartbeat_at").where("started_at", "<", instantAgo(opts.staleMs))),
      );
  const rows = await stale(k("allocation_runs")).orderBy("id").select("id", "claimed_by", "attempts");
  const out: StaleRecovery = { requeued: [], failed: [] };
  for (const r of rows) {
    const again = stale(k("allocation_runs").where({ id: r.id }));
    if (r.claimed_by == null) again.whereNull("claimed_by");
    else again.where("claimed_by", r.claimed_by);
    const who = r.claimed_by ? `the app instance solving it (${r.claimed_by})` : "the server solving it";
    if (Number(r.attempts) >= opts.maxAttempts) {
      const n = await again.update({
        status: "failed",
        phase: "failed",
        error: `The run was stopped because ${who} stopped answering, after ${r.attempts} attempt(s); start it again.`,
        finished_at: nowInstant(),
        version: k.raw("version + 1"),
      });
      if (n === 1) out.failed.push(r.id);
    } else {
      const n = await again.update({
        status: "queued",
        phase: "queued again (solver stopped answering)",
        fraction: 0,
        claimed_by: null,
        heartbeat_at: null,
        version: k.raw("version + 1"),
      });
      if (n === 1) out.requeued.push(r.id);
    }
  }
  return out;
}

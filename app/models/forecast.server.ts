import type { Knex } from "knex";
import type { Principal } from "~/auth/guard.server";
import { can } from "~/auth/permissions";
import type { Scope } from "~/auth/scope";
import { INTERVAL_LEVEL } from "~/compute/censored-forecast";
import { MEASURE_DIRECTIONS, zScore } from "~/compute/features";
import { forecastFromModel, type StoredModel } from "~/compute/forecast-explain";
import { type ProgressUpdate, progressUpdate } from "~/compute/progress-update";
import { nowInstant } from "~/dates";
import { type Db, db, type Row, type TableRow } from "~/db.server";
import { notFound } from "~/errors";
import {
  type DeviceForecast,
  type NoForecastReason,
  noForecastText,
  type WorkerForecast,
  workerForecastSchema,
} from "~/schemas/forecast";
import type { TableQuery } from "~/schemas/table-query";
import { latestConsent } from "./consent.server";
import { lockWorker } from "./locks.server";
import { type ScoringNorm, scoringNorms } from "./norms.server";
import { paged } from "./paging.server";
import { WORKER_HEADER, whereWorkerInScope, workersWithPlace } from "./workers.server";

// Worker forecasts (docs/methods.md): computed from the approved model version of each
// device type for workers whose `planning` consent is in force, refreshed as sessions are logged, erased on
// withdrawal. Coordinators receive hours and intervals only; the clinical view (z-scores and how each moved
// the forecast) is built for assessors alone, here in the data layer.

export { INTERVAL_LEVEL };

export function labelFor(code: string, name?: string | null): string {
  return name || (MEASURE_DIRECTIONS as Record<string, { label: string }>)[code]?.label || code;
}

/**
 * Each worker's latest baseline z-score per measure, from assessment sessions on or before the worker's
 * cutoff date (none = any date). Positive = better (docs/methods.md). With `norms` (a model version's
 * pinned norm set) the raw values are scored with those norms; otherwise each result's stored z-score.
 */
export async function baselineZScores(
  k: Db,
  workerIds: number[],
  measureIds: number[],
  cutoffs?: Map<number, string | null>,
  norms?: Map<number, ScoringNorm> | null,
): Promise<Map<number, Map<number, number>>> {
  const out = new Map<number, Map<number, number>>();
  if (workerIds.length === 0 || measureIds.length === 0) return out;
  for (let i = 0; i < workerIds.length; i += 500) {
    const rows = await k("assessment_results as r")
      .join("assessment_sessions as s", "s.id", "r.session_id")
      .whereIn("s.worker_id", workerIds.slice(i, i + 500))
      .whereIn("r.measure_id", measureIds)
      .modify((q) => (norms ? q : q.whereNotNull("r.z_score")))
      .select("s.worker_id", "r.measure_id", "r.value", "r.z_score", "s.assessed_on")
      .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
    for (const r of rows) {
      const cutoff = cutoffs?.get(r.worker_id);
      if (cutoff && (r.assessed_on as string) > cutoff) continue;
      const norm = norms?.get(r.measure_id);
      if (norms && !norm) continue;
      let m = out.get(r.worker_id);
      if (!m) {
        m = new Map();
        out.set(r.worker_id, m);
      }
      m.set(r.measure_id, norm ? zScore(Number(r.value), norm.mean, norm.sd, norm.higherIsBetter) : Number(r.z_score));
    }
  }
  return out;
}

export interface ApprovedModel {
  id: number;
  versionNumber: number;
  approvedAt: string | null;
  cohortSize: number;
  loocvMaeHours: number;
  loocvCoverage80: number;
  measureIds: number[];
  measures: { code: string; label: string }[];
  model: StoredModel;
  /** The pinned norm set's norms (null for versions fitted before norm sets were pinned). */
  norms: Map<number, ScoringNorm> | null;
}

export async function loadApprovedModel(k: Db, deviceTypeId: number): Promise<ApprovedModel | null> {
  const v = await k("model_versions")
    .where({ device_type_id: deviceTypeId, status: "approved" })
    .orderBy("version_number", "desc")
    .first();
  return v ? toApprovedModel(k, v) : null;
}

async function toApprovedModel(k: Db, v: Row): Promise<ApprovedModel> {
  const measureIds: number[] = JSON.parse(v.measure_ids);
  const codes: string[] = JSON.parse(v.measure_codes);
  const names = new Map(
    (await k("measures").whereIn("id", measureIds).select("id", "name")).map((m) => [m.id, m.name]),
  );
  const std = JSON.parse(v.standardisation) as { means: number[]; sds: number[] };
  return {
    id: v.id,
    versionNumber: v.version_number,
    approvedAt: v.approved_at ? String(v.approved_at) : null,
    cohortSize: v.cohort_size,
    loocvMaeHours: Number(v.loocv_mae_hours),
    loocvCoverage80: Number(v.loocv_coverage80),
    measureIds,
    measures: codes.map((c, i) => ({ code: c, label: labelFor(c, names.get(measureIds[i])) })),
    norms: v.norm_set_id == null ? null : await scoringNorms(v.norm_set_id, measureIds, k),
    model: {
      coefficients: JSON.parse(v.coefficients),
      covariance: JSON.parse(v.covariance),
      residualSD: Number(v.residual_sd),
      dfResidual: Number(v.df_residual),
      means: std.means,
      sds: std.sds,
    },
  };
}

export async function planningQuantile(k: Db = db()): Promise<number> {
  const org = await k("organisations").first("planning_quantile");
  const q = Number(org?.planning_quantile);
  return q > 0 && q < 1 ? q : 0.8;
}

export async function setPlanningQuantile(q: number): Promise<number> {
  return db().transaction(async (trx) => {
    await trx("organisations").update({ planning_quantile: q });
    let n = 0;
    for (const d of await trx("device_types").select("id")) n += await refreshForecastsForDeviceType(trx, d.id, null);
    return n;
  });
}

export interface ForecastContext {
  actor: number | null;
  now?: string;
  quantile?: number;
}

/** Logged sessions of a course in order, as the curve sees them. */
export async function loggedSessions(k: Db, workerId: number, deviceTypeId: number) {
  const rows = await k("training_sessions")
    .where({ worker_id: workerId, device_type_id: deviceTypeId, status: "attended" })
    .whereNotNull("task_score")
    .whereNotNull("cumulative_hours")
    .select(
      "id",
      "duration_hours",
      "task_score",
      "cumulative_hours",
      "logged_at",
      "scheduled_start",
      "notes",
      "logged_by",
    )
    .orderBy([{ column: "cumulative_hours" }, { column: "id" }]);
  return rows.map((r) => ({
    id: r.id,
    durationHours: Number(r.duration_hours),
    score: Number(r.task_score),
    cumulativeHours: Number(r.cumulative_hours),
    at: String(r.logged_at ?? r.scheduled_start ?? ""),
    notes: r.notes ?? null,
    loggedBy: r.logged_by,
  }));
}

export type UpsertResult =
  | { status: "ready"; progress: ProgressUpdate | null; medianHours: number }
  | { status: "no_consent" | "no_model" | "stopped" }
  | { status: "missing_measures"; missingMeasures: string[] };

/**
 * Compute and store one worker's forecast on one device type from the approved version, including the
 * progress update when sessions are logged. Removes a stale forecast when it can no longer be made.
 */
export async function upsertForecast(
  k: Db,
  workerId: number,
  deviceTypeId: number,
  ctx: ForecastContext,
  cached?: { model?: ApprovedModel | null },
): Promise<UpsertResult> {
  const now = ctx.now ?? nowInstant();
  await lockWorker(k, workerId); // the forecast row and open flags are checked, then written
  const drop = () => k("forecasts").where({ worker_id: workerId, device_type_id: deviceTypeId }).del();
  if ((await latestConsent(k, [workerId], "planning")).get(workerId) !== "given") {
    await drop();
    return { status: "no_consent" };
  }
  const model = cached && "model" in cached ? (cached.model ?? null) : await loadApprovedModel(k, deviceTypeId);
  if (!model) {
    await drop();
    return { status: "no_model" };
  }
  const course = await k("device_courses").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
  if (course?.status === "stopped") {
    await drop();
    return { status: "stopped" };
  }
  const cutoff = course?.started_on ? course.started_on : null;
  const z = (await baselineZScores(k, [workerId], model.measureIds, new Map([[workerId, cutoff]]), model.norms)).get(
    workerId,
  );
  const values = model.measureIds.map((m) => z?.get(m));
  if (values.some((v) => v === undefined)) {
    await drop();
    return { status: "missing_measures", missingMeasures: missingOf(model, z) };
  }
  const quantile = ctx.quantile ?? (await planningQuantile(k));
  const numbers = forecastFromModel(model.model, model.measures, values as number[], {
    quantile,
    level: INTERVAL_LEVEL,
  });

  let progress: ProgressUpdate | null = null;
  let progressStatus: TableRow<"forecasts">["progress_status"] = null;
  const hoursDone = Number(course?.cumulative_hours ?? 0);
  if (course?.status === "proficient") {
    progressStatus = "proficient";
  } else if (course && hoursDone > 0) {
    const criterion = await k("proficiency_criteria").where({ device_type_id: deviceTypeId }).first();
    const sessions = await loggedSessions(k, workerId, deviceTypeId);
    progress = progressUpdate({
      baseline: { logMean: numbers.logFit, logScale: numbers.logScale, df: numbers.df },
      sessions,
      hoursDone,
      threshold: Number(criterion?.score_threshold ?? 0.8),
      consecutiveSessions: Number(criterion?.consecutive_sessions ?? 1),
      quantile,
      level: INTERVAL_LEVEL,
    });
    progressStatus = progress.status;
    if (progress.status === "review")
      await raiseFlag(
        k,
        workerId,
        deviceTypeId,
        "plateau",
        progress.reason ?? "The progress curve levels off below the criterion.",
        now,
      );
    if (progress.beyondForecast)
      await raiseFlag(
        k,
        workerId,
        deviceTypeId,
        "beyond_forecast",
        `Already ${hoursDone.toFixed(1)} h without reaching the criterion: beyond the baseline forecast's 99th percentile.`,
        now,
      );
  }
  const row = {
    model_version_id: model.id,
    median_hours: numbers.medianHours,
    lower_hours: numbers.lowerHours,
    upper_hours: numbers.upperHours,
    interval_level: INTERVAL_LEVEL,
    planning_quantile: quantile,
    planning_hours: numbers.planningHours,
    log_mean: numbers.logFit,
    log_scale: numbers.logScale,
    df: numbers.df,
    explanation: JSON.stringify({ baselineHours: numbers.baselineHours, contributions: numbers.contributions }),
    hours_done: hoursDone,
    progress_status: progressStatus,
    remaining_hours: progress?.remainingHours ?? (progressStatus === "proficient" ? 0 : null),
    remaining_lower: progress?.remainingLower ?? null,
    remaining_upper: progress?.remainingUpper ?? null,
    remaining_planning_hours: progress?.remainingPlanningHours ?? null,
    progress: progress
      ? JSON.stringify({
          curveWeight: progress.curveWeight,
          reason: progress.reason,
          curve: progress.curve,
          curveChoice: progress.curveChoice,
          simulation: progress.simulation,
          crossing: progress.crossing,
        })
      : null,
    computed_at: now,
  };
  const existing = await k("forecasts").where({ worker_id: workerId, device_type_id: deviceTypeId }).first("id");
  if (existing) await k("forecasts").where({ id: existing.id }).update(row);
  else {
    await k("forecasts").insert({ worker_id: workerId, device_type_id: deviceTypeId, ...row });
    const w = await k("workers").where({ id: workerId }).first("stage");
    if (w && (w.stage === "consented" || w.stage === "baselined")) {
      await k("workers").where({ id: workerId }).update({ stage: "forecast", updated_at: now });
      await k("stage_changes").insert({
        worker_id: workerId,
        device_type_id: deviceTypeId,
        from_stage: w.stage,
        to_stage: "forecast",
        actor_user_id: ctx.actor,
        at: now,
      });
    }
  }
  return { status: "ready", progress, medianHours: numbers.medianHours };
}

async function raiseFlag(
  k: Db,
  workerId: number,
  deviceTypeId: number,
  kind: "plateau" | "beyond_forecast",
  reason: string,
  now: string,
) {
  const open = await k("review_flags")
    .where({ worker_id: workerId, device_type_id: deviceTypeId, kind })
    .whereNull("resolved_at")
    .first("id");
  if (open) await k("review_flags").where({ id: open.id }).update({ reason });
  else
    await k("review_flags").insert({ worker_id: workerId, device_type_id: deviceTypeId, kind, reason, raised_at: now });
}

export async function resolveFlags(workerId: number, deviceTypeId: number, userId: number): Promise<number> {
  return db()("review_flags")
    .where({ worker_id: workerId, device_type_id: deviceTypeId })
    .whereNull("resolved_at")
    .update({ resolved_at: nowInstant(), resolved_by: userId });
}

/** Recompute the forecasts of every planning-consented worker for one device type; returns how many were stored. */
export async function refreshForecastsForDeviceType(
  k: Db,
  deviceTypeId: number,
  actor: number | null,
  now?: string,
): Promise<number> {
  const model = await loadApprovedModel(k, deviceTypeId);
  const quantile = await planningQuantile(k);
  if (!model) {
    await k("forecasts").where({ device_type_id: deviceTypeId }).del();
    return 0;
  }
  const consent = await latestConsent(k, null, "planning");
  let n = 0;
  for (const [id, status] of consent) {
    if (status !== "given") {
      await k("forecasts").where({ worker_id: id, device_type_id: deviceTypeId }).del();
      continue;
    }
    if ((await upsertForecast(k, id, deviceTypeId, { actor, now, quantile }, { model })).status === "ready") n++;
  }
  return n;
}

export interface WorkerForecastRefresh {
  deviceTypeId: number;
  deviceType: string;
  result: UpsertResult;
}

/**
 * Recompute one worker's forecast on every device type (on planning consent, on saving or re-scoring a
 * baseline), inside the caller's transaction; says per device type what came of it.
 */
export async function refreshForecastsForWorker(
  k: Db,
  workerId: number,
  actor: number | null,
): Promise<WorkerForecastRefresh[]> {
  const out: WorkerForecastRefresh[] = [];
  for (const d of await k("device_types").select("id", "name").orderBy("id"))
    out.push({ deviceTypeId: d.id, deviceType: d.name, result: await upsertForecast(k, workerId, d.id, { actor }) });
  return out;
}

/** One line per device type for the notice after a baseline is saved: the forecast made, or the true reason for none. */
export function refreshSummary(r: WorkerForecastRefresh[]): string {
  if (r.length && r.every((x) => x.result.status === "no_consent")) return noForecastText("no_consent");
  return r
    .map((x) =>
      x.result.status === "ready"
        ? `${x.deviceType}: forecast median ${x.result.medianHours.toFixed(1)} h.`
        : `${x.deviceType}: ${noForecastText(x.result.status, "missingMeasures" in x.result ? x.result.missingMeasures : [])}`,
    )
    .join(" ");
}

/** The sentence for a gap found by forecastGap. */
export const gapText = (g: { reason: NoForecastReason; missingMeasures: string[] } | null) =>
  noForecastText(g?.reason ?? "not_computed", g?.missingMeasures ?? []);

const missingOf = (model: ApprovedModel, z: Map<number, number> | undefined) =>
  model.measureIds.flatMap((m, i) => (z?.has(m) ? [] : [model.measures[i].label]));

/**
 * Why a worker has no stored forecast on a device type (null: nothing stops one; it has been computed or will
 * be on the next save). The same checks, in the same order, as upsertForecast.
 */
export async function forecastGap(
  k: Db,
  workerId: number,
  deviceTypeId: number,
  cached?: { model?: ApprovedModel | null; planningConsent?: boolean },
): Promise<{ reason: NoForecastReason; missingMeasures: string[] } | null> {
  const consent = cached?.planningConsent ?? (await latestConsent(k, [workerId], "planning")).get(workerId) === "given";
  if (!consent) return { reason: "no_consent", missingMeasures: [] };
  const model = cached && "model" in cached ? (cached.model ?? null) : await loadApprovedModel(k, deviceTypeId);
  if (!model) return { reason: "no_model", missingMeasures: [] };
  const course = await k("device_courses").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
  if (course?.status === "stopped") return { reason: "stopped", missingMeasures: [] };
  const cutoff = course?.started_on ? (course.started_on as string) : null;
  const z = (await baselineZScores(k, [workerId], model.measureIds, new Map([[workerId, cutoff]]), model.norms)).get(
    workerId,
  );
  const missing = missingOf(model, z);
  if (missing.length) return { reason: "missing_measures", missingMeasures: missing };
  if (course?.status === "paused") return { reason: "paused", missingMeasures: [] };
  return null;
}

/**
 * Erase a worker's forecasts, drift records and review flags (on withdrawal, at once, docs/consent-and-disclosure.md). Call it
 * inside the withdrawal's transaction; returns how many forecasts were erased.
 */
export async function eraseForecasts(trx: Db, workerId: number): Promise<number> {
  const n = Number(await trx("forecasts").where({ worker_id: workerId }).del());
  await trx("forecast_outcomes").where({ worker_id: workerId }).del();
  await trx("review_flags").where({ worker_id: workerId }).del();
  return n;
}

/** When a course reaches the criterion: keep actual vs forecast for the version's drift figures. */
export async function recordOutcome(
  k: Db,
  workerId: number,
  deviceTypeId: number,
  actualHours: number,
  reachedOn: string,
  now: string,
): Promise<void> {
  const f = await k("forecasts").where({ worker_id: workerId, device_type_id: deviceTypeId }).first();
  if (!f) return;
  await k("forecast_outcomes").where({ worker_id: workerId, device_type_id: deviceTypeId }).del();
  await k("forecast_outcomes").insert({
    model_version_id: f.model_version_id,
    worker_id: workerId,
    device_type_id: deviceTypeId,
    forecast_median_hours: f.median_hours,
    forecast_lower_hours: f.lower_hours,
    forecast_upper_hours: f.upper_hours,
    actual_hours: actualHours,
    forecast_planning_hours: f.planning_hours,
    planning_quantile: f.planning_quantile,
    covered: actualHours >= Number(f.lower_hours) && actualHours <= Number(f.upper_hours),
    reached_on: reachedOn,
    recorded_at: now,
  });
}

/** The worker row if it is inside the scope, else null (callers answer 404: no hint that it exists). */
export async function workerInScope(scope: Scope, workerId: number, k: Db = db()) {
  const q = workersWithPlace(k).where("workers.id", workerId).select(WORKER_HEADER);
  const row = await whereWorkerInScope(q, scope).first();
  return row
    ? {
        id: row.id as number,
        employeeNumber: row.employee_number as string,
        name: `${row.given_name} ${row.family_name}`,
        stage: row.stage as string,
        site: row.site as string,
        department: row.department as string,
      }
    : null;
}

/** Clinical view (z-scores and contributions) for who may see it; planning view for everyone else. */
export function forecastViewFor(p: Principal): "clinical" | "planning" {
  return can(p, "forecast.clinical") ? "clinical" : "planning";
}

/**
 * The forecast payload for one worker, shaped by the reader's view and checked against the shared schema.
 * Throws a 404 UserError when the worker is outside the principal's scope.
 */
export async function workerForecastView(p: Principal, workerId: number, k: Db = db()): Promise<WorkerForecast> {
  const worker = await workerInScope(p.scope, workerId, k);
  if (!worker) throw notFound("No such worker in your scope.");
  const view = forecastViewFor(p);
  const planningConsent = (await latestConsent(k, [workerId], "planning")).get(workerId) === "given";
  const quantile = await planningQuantile(k);
  const devices = await k("device_types").select("id", "code", "name").orderBy("id");
  const forecasts: DeviceForecast[] = [];
  if (planningConsent) {
    for (const d of devices) {
      const model = await loadApprovedModel(k, d.id);
      const f = await k("forecasts").where({ worker_id: workerId, device_type_id: d.id }).first();
      const course = await k("device_courses").where({ worker_id: workerId, device_type_id: d.id }).first();
      const flags = await k("review_flags")
        .where({ worker_id: workerId, device_type_id: d.id })
        .whereNull("resolved_at")
        .select("kind", "reason", "raised_at");
      const gap = f ? null : await forecastGap(k, workerId, d.id, { model, planningConsent });
      const usedModel =
        f && model && f.model_version_id === model.id ? model : f ? await modelById(k, f.model_version_id) : model;
      const progressJson = f?.progress ? JSON.parse(f.progress) : null;
      const explanation = f && view === "clinical" ? JSON.parse(f.explanation) : null;
      forecasts.push({
        deviceType: { id: d.id, code: d.code, name: d.name },
        status: f ? "ready" : (gap?.reason ?? "not_computed"),
        missingMeasures: gap?.missingMeasures ?? [],
        modelVersion: usedModel
          ? {
              id: usedModel.id,
              versionNumber: usedModel.versionNumber,
              approvedAt: usedModel.approvedAt,
              cohortSize: usedModel.cohortSize,
              loocvMaeHours: usedModel.loocvMaeHours,
              loocvCoverage80: usedModel.loocvCoverage80,
              measures: usedModel.measures.map((m) => m.label),
            }
          : null,
        medianHours: f ? Number(f.median_hours) : null,
        lowerHours: f ? Number(f.lower_hours) : null,
        upperHours: f ? Number(f.upper_hours) : null,
        intervalLevel: f ? Number(f.interval_level) : INTERVAL_LEVEL,
        planningQuantile: f ? Number(f.planning_quantile) : quantile,
        planningHours: f ? Number(f.planning_hours) : null,
        computedAt: f ? String(f.computed_at) : null,
        explanation: explanation
          ? { baselineHours: explanation.baselineHours, contributions: explanation.contributions }
          : null,
        course: course
          ? {
              status: course.status,
              cumulativeHours: Number(course.cumulative_hours),
              proficientOn: course.proficient_on ? course.proficient_on : null,
              hoursToProficiency: course.hours_to_proficiency == null ? null : Number(course.hours_to_proficiency),
            }
          : null,
        progress: f?.progress_status
          ? {
              hoursDone: Number(f.hours_done),
              status: f.progress_status,
              remainingHours: f.remaining_hours == null ? null : Number(f.remaining_hours),
              remainingLower: f.remaining_lower == null ? null : Number(f.remaining_lower),
              remainingUpper: f.remaining_upper == null ? null : Number(f.remaining_upper),
              remainingPlanningHours: f.remaining_planning_hours == null ? null : Number(f.remaining_planning_hours),
              curveWeight: progressJson?.curveWeight ?? null,
              reason: progressJson?.reason ?? null,
            }
          : null,
        reviewFlags: flags.map((r) => ({ kind: r.kind, reason: r.reason, raisedAt: String(r.raised_at) })),
      });
    }
  }
  const howComputed =
    "Hours to proficiency are forecast from past trainees who agreed to model use, including those still in training when the data was taken (they count for the hours they reached): log(hours) is a linear function of the worker's baseline measures (scored with the model's own norm set and standardised against the cohort), fitted by censored maximum likelihood. The median is the middle forecast, the 80 % interval holds the actual hours four times in five when the model is right, and the planning figure is the chosen upper quantile so that plans rarely run short. Once sessions are logged, the progress curve's own estimate of the remaining hours is combined with the baseline forecast, weighted by how certain each is.";
  return workerForecastSchema.parse({
    worker: {
      id: worker.id,
      employeeNumber: worker.employeeNumber,
      name: worker.name,
      site: worker.site,
      department: worker.department,
    },
    view,
    planningConsent,
    forecasts,
    howComputed,
  });
}

async function modelById(k: Db, id: number): Promise<ApprovedModel | null> {
  const v = await k("model_versions").where({ id }).first();
  return v ? toApprovedModel(k, v) : null;
}

export interface ForecastListRow {
  workerId: number;
  employeeNumber: string;
  name: string;
  deviceTypeId: number;
  deviceType: string;
  medianHours: number;
  lowerHours: number;
  upperHours: number;
  planningHours: number;
  progressStatus: string | null;
  remainingHours: number | null;
  flagged: boolean;
}

/** Stored forecasts of workers in scope (hours only: fit for coordinators and assessors alike). */
export function listForecastTable(scope: Scope, q: TableQuery, filters: { deviceTypeId?: number; flagged?: boolean }) {
  const query = db()("forecasts as f")
    .join("workers", "workers.id", "f.worker_id")
    .join("device_types as d", "d.id", "f.device_type_id")
    .select(
      "f.worker_id",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "f.device_type_id",
      "d.name as device_name",
      "f.median_hours",
      "f.lower_hours",
      "f.upper_hours",
      "f.planning_hours",
      "f.progress_status",
      "f.remaining_hours",
    )
    .select(
      db().raw(
        "(select count(*) from review_flags rf where rf.worker_id = f.worker_id and rf.device_type_id = f.device_type_id and rf.resolved_at is null) as open_flags",
      ),
    );
  whereWorkerInScope(query as Knex.QueryBuilder, scope);
  if (filters.deviceTypeId) query.where("f.device_type_id", filters.deviceTypeId);
  if (filters.flagged)
    query.whereExists((e) =>
      e
        .select(db().raw("1"))
        .from("review_flags as rf2")
        .whereRaw("rf2.worker_id = f.worker_id and rf2.device_type_id = f.device_type_id")
        .whereNull("rf2.resolved_at"),
    );
  if (q.q) {
    const term = `%${q.q.toLowerCase()}%`;
    query.where((w) =>
      w
        .whereRaw("lower(workers.employee_number) like ?", [term])
        .orWhereRaw("lower(workers.given_name || ' ' || workers.family_name) like ?", [term]),
    );
  }
  return paged(
    query,
    q,
    {
      worker: "workers.employee_number",
      device: "d.name",
      median: "f.median_hours",
      planning: "f.planning_hours",
      remaining: "f.remaining_hours",
    },
    "worker",
    "f.id",
    (r): ForecastListRow => ({
      workerId: r.worker_id as number,
      employeeNumber: r.employee_number as string,
      name: `${r.given_name} ${r.family_name}`,
      deviceTypeId: r.device_type_id as number,
      deviceType: r.device_name as string,
      medianHours: Number(r.median_hours),
      lowerHours: Number(r.lower_hours),
      upperHours: Number(r.upper_hours),
      planningHours: Number(r.planning_hours),
      progressStatus: (r.progress_status as string) ?? null,
      remainingHours: r.remaining_hours == null ? null : Number(r.remaining_hours),
      flagged: Number(r.open_flags) > 0,
    }),
  );
}

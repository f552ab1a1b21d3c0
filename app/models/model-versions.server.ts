import { columnStandardizer, fitLinearModel, leaveOneOut } from "~/compute/regression";
import { studentTQuantile } from "~/compute/student-t";
import { type Db, db, type Row } from "~/db.server";
import { latestConsent } from "./consent.server";
import { baselineZScores, labelFor, refreshForecastsForDeviceType } from "./forecast.server";

export { labelFor };

import { conflict, notFound, UserError } from "~/errors";
import {
  DRIFT_COVERAGE_WARNING,
  DRIFT_MINIMUM_OUTCOMES,
  EXCLUSION_LABELS,
  type ExclusionReason,
} from "~/schemas/forecast";

// Forecast model versions (docs/methods.md): the cohort, the fit and its diagnostics, the saved
// version, and approval by a second assessor. Cohort rows are de-identified: nothing here returns a worker id
// or name to a page, only counts, coefficients and (actual, predicted) pairs sorted by hours.

export type { ExclusionReason };
export { EXCLUSION_LABELS };

export interface MeasureOption {
  id: number;
  code: string;
  name: string;
  unit: string;
  label: string;
}

export async function listModelMeasures(k: Db = db()): Promise<MeasureOption[]> {
  const rows = await k("measures").where({ active: true }).select("id", "code", "name", "unit").orderBy("code");
  return rows.map((r) => ({ id: r.id, code: r.code, name: r.name, unit: r.unit, label: labelFor(r.code, r.name) }));
}

export interface Cohort {
  /** One row per included past trainee: z-scores in the order of measureIds, and hours to proficiency. */
  rows: { z: number[]; hours: number }[];
  excluded: Record<ExclusionReason, number>;
  candidates: number;
}

/**
 * Past trainees on a device type who may join a cohort: a proficient course with hours to proficiency, a
 * `model` consent in force, and a baseline (on or before the course start) for every chosen measure. Every
 * other course is counted under the reason it was left out; censored courses never become outcomes.
 */
export async function buildCohort(deviceTypeId: number, measureIds: number[], k: Db = db()): Promise<Cohort> {
  const courses = await k("device_courses")
    .where({ device_type_id: deviceTypeId })
    .select("worker_id", "status", "hours_to_proficiency", "started_on", "proficient_on")
    .orderBy("worker_id");
  const excluded: Record<ExclusionReason, number> = {
    still_training: 0,
    stopped: 0,
    withdrawn: 0,
    no_model_consent: 0,
    missing_measures: 0,
  };
  const consent = await latestConsent(
    k,
    courses.map((c) => c.worker_id),
    "model",
  );
  const eligible: typeof courses = [];
  for (const c of courses) {
    const state = consent.get(c.worker_id);
    // Consent first: without it we do not even read the baseline.
    if (state === "withdrawn") {
      excluded.withdrawn++;
      continue;
    }
    if (state !== "given") {
      excluded.no_model_consent++;
      continue;
    }
    if (c.status === "stopped") {
      excluded.stopped++;
      continue;
    }
    if (c.status !== "proficient" || !(Number(c.hours_to_proficiency) > 0)) {
      excluded.still_training++;
      continue;
    }
    eligible.push(c);
  }
  const cutoffs = new Map<number, string | null>(
    eligible.map((c) => [c.worker_id, c.started_on ? c.started_on : null]),
  );
  const baselines = await baselineZScores(
    k,
    eligible.map((c) => c.worker_id),
    measureIds,
    cutoffs,
  );
  const rows: Cohort["rows"] = [];
  for (const c of eligible) {
    const z = measureIds.map((m) => baselines.get(c.worker_id)?.get(m));
    if (z.some((v) => v === undefined)) {
      excluded.missing_measures++;
      continue;
    }
    rows.push({ z: z as number[], hours: Number(c.hours_to_proficiency) });
  }
  return { rows, excluded, candidates: courses.length };
}

export interface CoefficientRow {
  name: string;
  code: string | null;
  estimate: number;
  se: number;
  lower95: number;
  upper95: number;
  multiplierPerSD: number;
}

export interface WorkbenchFit {
  deviceTypeId: number;
  measures: { id: number; code: string; label: string }[];
  ridge: number;
  cohortSize: number;
  candidates: number;
  excluded: Record<ExclusionReason, number>;
  coefficients: CoefficientRow[];
  covariance: number[][];
  residualSD: number;
  dfResidual: number;
  rSquared: number;
  loocvMaeHours: number;
  loocvCoverage80: number;
  standardisation: { means: number[]; sds: number[] };
  /** De-identified, sorted by actual hours: actual, leave-one-out predicted median and its 80 % interval. */
  calibration: { actual: number; predicted: number; lower: number; upper: number }[];
  /** In-sample fitted hours and log-scale residuals, sorted by fitted hours. */
  residuals: { fitted: number; residual: number }[];
}

/** The choices cannot be fitted (unknown device or measure, too few records, a constant measure): 422. */
const unfit = (message: string) => new UserError(message, { status: 422 });

/** Fit log(hours) on the cohort's standardised z-scores, with LOOCV diagnostics. */
export function fitCohort(
  cohort: Cohort,
  measures: { id: number; code: string; label: string }[],
  deviceTypeId: number,
  ridge = 0,
): WorkbenchFit {
  const n = cohort.rows.length;
  const k = measures.length;
  if (n < k + 3) {
    throw unfit(
      `Only ${n} usable past trainee${n === 1 ? "" : "s"} for ${k} measure${k === 1 ? "" : "s"}: at least ${k + 3} are needed (measures + 3) for the fit and its leave-one-out check.`,
    );
  }
  const X = cohort.rows.map((r) => r.z);
  const y = cohort.rows.map((r) => Math.log(r.hours));
  let std: ReturnType<typeof columnStandardizer>;
  try {
    std = columnStandardizer(X);
  } catch (e) {
    const j = Number(/measure (\d+)/.exec((e as Error).message)?.[1]);
    throw unfit(
      Number.isInteger(j)
        ? `${measures[j].label} has the same value for every past trainee, so it cannot explain differences.`
        : (e as Error).message,
    );
  }
  const Z = X.map((row) => std.apply(row));
  let fit: ReturnType<typeof fitLinearModel>;
  let loo: ReturnType<typeof leaveOneOut>;
  try {
    fit = fitLinearModel(Z, y, { ridge });
    loo = leaveOneOut(Z, y, { ridge, level: 0.8, logOutcome: true });
  } catch (e) {
    throw unfit(`The model could not be fitted: ${(e as Error).message}.`);
  }
  const t975 = studentTQuantile(0.975, fit.dfResidual);
  const names = ["Intercept (cohort average)", ...measures.map((m) => m.label)];
  const coefficients = fit.coefficients.map((b, i) => ({
    name: names[i],
    code: i === 0 ? null : measures[i - 1].code,
    estimate: b,
    se: fit.standardErrors[i],
    lower95: b - t975 * fit.standardErrors[i],
    upper95: b + t975 * fit.standardErrors[i],
    multiplierPerSD: Math.exp(b),
  }));
  const calibration = cohort.rows
    .map((r, i) => ({
      actual: r.hours,
      predicted: Math.exp(loo.predictions[i]),
      lower: Math.exp(loo.lower[i]),
      upper: Math.exp(loo.upper[i]),
    }))
    .sort((a, b) => a.actual - b.actual || a.predicted - b.predicted);
  const residuals = fit.fittedValues
    .map((f, i) => ({ fitted: Math.exp(f), residual: fit.residuals[i] }))
    .sort((a, b) => a.fitted - b.fitted);
  return {
    deviceTypeId,
    measures,
    ridge,
    cohortSize: n,
    candidates: cohort.candidates,
    excluded: cohort.excluded,
    coefficients,
    covariance: fit.covariance,
    residualSD: fit.residualSD,
    dfResidual: fit.dfResidual,
    rSquared: fit.rSquared,
    loocvMaeHours: loo.maeHours as number,
    loocvCoverage80: loo.coverage,
    standardisation: { means: std.means, sds: std.sds },
    calibration,
    residuals,
  };
}

async function measuresById(measureIds: number[], k: Db) {
  const rows = await k("measures").whereIn("id", measureIds).select("id", "code", "name");
  const byId = new Map(rows.map((r) => [r.id, r]));
  return measureIds.map((id) => {
    const r = byId.get(id);
    if (!r) throw unfit(`Measure ${id} does not exist.`);
    return { id, code: r.code, label: labelFor(r.code, r.name) };
  });
}

/** Build the cohort and fit it (the workbench's "Fit" button). */
export async function fitWorkbench(
  input: { deviceTypeId: number; measureIds: number[]; ridge: number },
  k: Db = db(),
): Promise<WorkbenchFit> {
  const measureIds = [...new Set(input.measureIds)];
  if (!(await k("device_types").where({ id: input.deviceTypeId }).first("id")))
    throw unfit("That device type does not exist.");
  const measures = await measuresById(measureIds, k);
  const cohort = await buildCohort(input.deviceTypeId, measureIds, k);
  return fitCohort(cohort, measures, input.deviceTypeId, input.ridge);
}

/** Refit on the server (never trusting numbers from the browser) and store as a draft version. */
export async function saveModelVersion(
  input: { deviceTypeId: number; measureIds: number[]; ridge: number; notes?: string },
  userId: number,
  k?: Db,
  opts?: { now?: string },
): Promise<{ id: number; versionNumber: number }> {
  const run = async (trx: Db) => {
    const fit = await fitWorkbench(input, trx);
    const last = await trx("model_versions")
      .where({ device_type_id: input.deviceTypeId })
      .max<{ m: number | null }>("version_number as m")
      .first();
    const versionNumber = Number(last?.m ?? 0) + 1;
    const now = opts?.now ?? new Date().toISOString();
    const [row] = await trx("model_versions")
      .insert({
        device_type_id: input.deviceTypeId,
        version_number: versionNumber,
        measure_ids: JSON.stringify(fit.measures.map((m) => m.id)),
        measure_codes: JSON.stringify(fit.measures.map((m) => m.code)),
        cohort_size: fit.cohortSize,
        excluded: JSON.stringify(fit.excluded),
        coefficients: JSON.stringify(fit.coefficients.map((c) => c.estimate)),
        standard_errors: JSON.stringify(fit.coefficients.map((c) => c.se)),
        covariance: JSON.stringify(fit.covariance),
        residual_sd: fit.residualSD,
        df_residual: fit.dfResidual,
        ridge: fit.ridge,
        standardisation: JSON.stringify(fit.standardisation),
        loocv_mae_hours: fit.loocvMaeHours,
        r_squared: fit.rSquared,
        loocv_coverage80: fit.loocvCoverage80,
        calibration: JSON.stringify(fit.calibration.map((c) => [c.actual, c.predicted, c.lower, c.upper])),
        status: "draft",
        notes: input.notes || null,
        fitted_by: userId,
        fitted_at: now,
      })
      .returning("id");
    return { id: row.id, versionNumber };
  };
  return k ? run(k) : db().transaction(run);
}

/**
 * Approve a draft: only an assessor other than the one who fitted it. The previously approved version of
 * the device type is retired, and every planning-consented worker's forecast is recomputed — one transaction.
 */
export async function approveModelVersion(
  versionId: number,
  userId: number,
  k?: Db,
  opts?: { now?: string },
): Promise<{ forecasts: number }> {
  const run = async (trx: Db) => {
    const v = await trx("model_versions").where({ id: versionId }).first();
    if (!v) throw notFound("That model version does not exist.");
    if (v.status !== "draft")
      throw conflict(`Version ${v.version_number} is ${v.status}; only a draft can be approved.`);
    if (v.fitted_by === userId)
      throw conflict("A version must be approved by an assessor other than the one who fitted it.");
    const now = opts?.now ?? new Date().toISOString();
    await trx("model_versions")
      .where({ device_type_id: v.device_type_id, status: "approved" })
      .update({ status: "retired", retired_by: userId, retired_at: now });
    await trx("model_versions")
      .where({ id: versionId })
      .update({ status: "approved", approved_by: userId, approved_at: now });
    return { forecasts: await refreshForecastsForDeviceType(trx, v.device_type_id, userId, opts?.now) };
  };
  return k ? run(k) : db().transaction(run);
}

/** Retire a version; forecasts made with it are withdrawn (plans then need an approved version again). */
export async function retireModelVersion(versionId: number, userId: number): Promise<void> {
  await db().transaction(async (trx) => {
    const v = await trx("model_versions").where({ id: versionId }).first();
    if (!v) throw notFound("That model version does not exist.");
    if (v.status === "retired") throw conflict(`Version ${v.version_number} is already retired.`);
    await trx("model_versions")
      .where({ id: versionId })
      .update({ status: "retired", retired_by: userId, retired_at: new Date().toISOString() });
    await trx("forecasts").where({ model_version_id: versionId }).del();
  });
}

export interface DriftStats {
  n: number;
  maeHours: number | null;
  coverage80: number | null;
  warn: boolean;
}
export { DRIFT_COVERAGE_WARNING, DRIFT_MINIMUM_OUTCOMES };

export async function driftByVersion(k: Db = db()): Promise<Map<number, DriftStats>> {
  const rows = await k("forecast_outcomes").select(
    "model_version_id",
    "actual_hours",
    "forecast_median_hours",
    "covered",
  );
  const acc = new Map<number, { n: number; abs: number; covered: number }>();
  for (const r of rows) {
    const a = acc.get(r.model_version_id) ?? { n: 0, abs: 0, covered: 0 };
    a.n++;
    a.abs += Math.abs(Number(r.actual_hours) - Number(r.forecast_median_hours));
    if (r.covered) a.covered++; // 1 on SQLite, true on PostgreSQL
    acc.set(r.model_version_id, a);
  }
  const out = new Map<number, DriftStats>();
  for (const [id, a] of acc) {
    const coverage80 = a.covered / a.n;
    out.set(id, {
      n: a.n,
      maeHours: a.abs / a.n,
      coverage80,
      warn: a.n >= DRIFT_MINIMUM_OUTCOMES && coverage80 < DRIFT_COVERAGE_WARNING,
    });
  }
  return out;
}

export interface VersionSummary {
  id: number;
  deviceTypeId: number;
  deviceTypeName: string;
  versionNumber: number;
  status: "draft" | "approved" | "retired";
  measures: string[];
  measureIds: number[];
  cohortSize: number;
  loocvMaeHours: number;
  rSquared: number;
  loocvCoverage80: number;
  fittedBy: string | null;
  fittedById: number | null;
  fittedAt: string;
  approvedBy: string | null;
  approvedAt: string | null;
  retiredBy: string | null;
  retiredAt: string | null;
  drift: DriftStats;
}

function summaryQuery(k: Db) {
  return k("model_versions as v")
    .join("device_types as d", "d.id", "v.device_type_id")
    .leftJoin("users as f", "f.id", "v.fitted_by")
    .leftJoin("users as a", "a.id", "v.approved_by")
    .leftJoin("users as r", "r.id", "v.retired_by")
    .select(
      "v.*",
      "d.name as device_type_name",
      "f.display_name as fitted_name",
      "a.display_name as approved_name",
      "r.display_name as retired_name",
    );
}

function toSummary(r: Row, drift: Map<number, DriftStats>): VersionSummary {
  const codes: string[] = JSON.parse(r.measure_codes);
  return {
    id: r.id,
    deviceTypeId: r.device_type_id,
    deviceTypeName: r.device_type_name,
    versionNumber: r.version_number,
    status: r.status,
    measures: codes.map((c) => labelFor(c)),
    measureIds: JSON.parse(r.measure_ids),
    cohortSize: r.cohort_size,
    loocvMaeHours: Number(r.loocv_mae_hours),
    rSquared: Number(r.r_squared),
    loocvCoverage80: Number(r.loocv_coverage80),
    fittedBy: r.fitted_name ?? null,
    fittedById: r.fitted_by ?? null,
    fittedAt: String(r.fitted_at),
    approvedBy: r.approved_name ?? null,
    approvedAt: r.approved_at ? String(r.approved_at) : null,
    retiredBy: r.retired_name ?? null,
    retiredAt: r.retired_at ? String(r.retired_at) : null,
    drift: drift.get(r.id) ?? { n: 0, maeHours: null, coverage80: null, warn: false },
  };
}

export async function listModelVersions(k: Db = db()): Promise<VersionSummary[]> {
  const [rows, drift] = await Promise.all([
    summaryQuery(k).orderBy([{ column: "v.device_type_id" }, { column: "v.version_number", order: "desc" }]),
    driftByVersion(k),
  ]);
  return rows.map((r) => toSummary(r, drift));
}

export interface VersionDetail extends VersionSummary {
  notes: string | null;
  ridge: number;
  residualSD: number;
  dfResidual: number;
  excluded: Record<ExclusionReason, number>;
  coefficients: CoefficientRow[];
  calibration: { actual: number; predicted: number; lower: number; upper: number }[];
  standardisation: { means: number[]; sds: number[] };
}

export async function getModelVersion(id: number, k: Db = db()): Promise<VersionDetail | null> {
  const r = await summaryQuery(k).where("v.id", id).first();
  if (!r) return null;
  const summary = toSummary(r, await driftByVersion(k));
  const codes: string[] = JSON.parse(r.measure_codes);
  const coef: number[] = JSON.parse(r.coefficients);
  const se: number[] = JSON.parse(r.standard_errors);
  const t975 = studentTQuantile(0.975, Number(r.df_residual));
  return {
    ...summary,
    notes: r.notes ?? null,
    ridge: Number(r.ridge),
    residualSD: Number(r.residual_sd),
    dfResidual: Number(r.df_residual),
    excluded: JSON.parse(r.excluded),
    coefficients: coef.map((b, i) => ({
      name: i === 0 ? "Intercept (cohort average)" : labelFor(codes[i - 1]),
      code: i === 0 ? null : codes[i - 1],
      estimate: b,
      se: se[i],
      lower95: b - t975 * se[i],
      upper95: b + t975 * se[i],
      multiplierPerSD: Math.exp(b),
    })),
    calibration: (JSON.parse(r.calibration) as number[][]).map(([actual, predicted, lower, upper]) => ({
      actual,
      predicted,
      lower,
      upper,
    })),
    standardisation: JSON.parse(r.standardisation),
  };
}

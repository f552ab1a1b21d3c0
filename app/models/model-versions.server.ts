import {
  type CoverageEstimate,
  coverageAlarm,
  type PlannedCourse,
  planningFigureCoverage,
} from "~/compute/calibration";
import { type CourseOutcome, fitCensoredForecast } from "~/compute/censored-forecast";
import { normalQuantile, studentTQuantile } from "~/compute/student-t";
import { nowInstant } from "~/dates";
import { type Db, db, type Row } from "~/db.server";
import { conflict, notFound, UserError } from "~/errors";
import { DRIFT_ALPHA, EXCLUSION_LABELS, type ExclusionReason } from "~/schemas/forecast";
import { latestConsent } from "./consent.server";
import { baselineZScores, labelFor, planningQuantile, refreshForecastsForDeviceType } from "./forecast.server";
import { normSetCoverage, scoringNorms } from "./norms.server";
import { reliabilityByMeasure } from "./reliability-report.server";

export { labelFor };

// Forecast model versions (docs/methods.md): the cohort, the censored fit and its leave-one-out check, the
// saved version, and approval by a second assessor. Cohort rows are de-identified: nothing here returns a
// worker id or name to a page, only counts, coefficients and (actual, predicted) pairs sorted by hours.
//
// Every course with model-use consent, every chosen measure and some training hours is in the cohort:
// completed courses at their hours to proficiency, courses still in training when the data was taken and
// stopped courses censored at their hours so far (docs/decisions/ on censoring).

export type { ExclusionReason };
export { EXCLUSION_LABELS };

/** Below this ICC(2,1) a measure's reliability is poor (Koo & Li 2016); the workbench warns on it. */
export const POOR_RELIABILITY = 0.5;

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
  /** One row per course in the fit: z-scores in the order of measureIds, hours and how the course stands. */
  rows: { z: number[]; hours: number; outcome: CourseOutcome }[];
  excluded: Partial<Record<ExclusionReason, number>>;
  candidates: number;
  normSet: { id: number; name: string };
}

/** The choices cannot be fitted (unknown device or measure, too few records, a constant measure): 422. */
const unfit = (message: string) => new UserError(message, { status: 422 });

/** The norm set a new fit is pinned to: the one chosen, or the newest holding every chosen measure. */
async function normSetFor(measureIds: number[], chosen: number | null | undefined, k: Db) {
  const sets = await normSetCoverage(k);
  const covers = (s: { measureIds: number[] }) => measureIds.every((m) => s.measureIds.includes(m));
  if (chosen != null) {
    const set = sets.find((s) => s.id === chosen);
    if (!set) throw new UserError("That norm set does not exist.", { status: 422, field: "normSetId" });
    if (!covers(set))
      throw new UserError(`${set.name} has no norm for every chosen measure; choose another norm set.`, {
        status: 422,
        field: "normSetId",
      });
    return { id: set.id, name: set.name };
  }
  const set = sets.find(covers);
  if (!set) throw unfit("No norm set holds a norm for every chosen measure, so their z-scores cannot be computed.");
  return { id: set.id, name: set.name };
}

/**
 * Courses on a device type that join the cohort: a `model` consent in force, some training hours, and a
 * baseline (on or before the course start) for every chosen measure, scored with the pinned norm set.
 * Completed courses enter at their hours to proficiency; courses in training or stopped are censored at
 * their hours so far. Every other course is counted under the reason it was left out.
 */
export async function buildCohort(
  deviceTypeId: number,
  measureIds: number[],
  k: Db = db(),
  normSetId?: number | null,
): Promise<Cohort> {
  const normSet = await normSetFor(measureIds, normSetId, k);
  const courses = await k("device_courses")
    .where({ device_type_id: deviceTypeId })
    .select("worker_id", "status", "hours_to_proficiency", "cumulative_hours", "started_on")
    .orderBy("worker_id");
  const excluded: Partial<Record<ExclusionReason, number>> = {
    withdrawn: 0,
    no_model_consent: 0,
    not_started: 0,
    missing_measures: 0,
  };
  const bump = (r: ExclusionReason) => {
    excluded[r] = (excluded[r] ?? 0) + 1;
  };
  const consent = await latestConsent(
    k,
    courses.map((c) => c.worker_id),
    "model",
  );
  const eligible: { workerId: number; startedOn: string | null; hours: number; outcome: CourseOutcome }[] = [];
  for (const c of courses) {
    const state = consent.get(c.worker_id);
    // Consent first: without it we do not even read the baseline.
    if (state === "withdrawn") {
      bump("withdrawn");
      continue;
    }
    if (state !== "given") {
      bump("no_model_consent");
      continue;
    }
    const completed = c.status === "proficient" && Number(c.hours_to_proficiency) > 0;
    // A course not (yet) at the criterion counts by the hours it reached, never by a stray outcome value.
    const hours = completed ? Number(c.hours_to_proficiency) : Number(c.cumulative_hours ?? 0);
    if (!(hours > 0)) {
      bump("not_started");
      continue;
    }
    eligible.push({
      workerId: c.worker_id,
      startedOn: c.started_on ? c.started_on : null,
      hours,
      outcome: completed ? "completed" : c.status === "stopped" ? "stopped" : "training",
    });
  }
  const baselines = await baselineZScores(
    k,
    eligible.map((c) => c.workerId),
    measureIds,
    new Map(eligible.map((c) => [c.workerId, c.startedOn])),
    await scoringNorms(normSet.id, measureIds, k),
  );
  const rows: Cohort["rows"] = [];
  for (const c of eligible) {
    const z = measureIds.map((m) => baselines.get(c.workerId)?.get(m));
    if (z.some((v) => v === undefined)) {
      bump("missing_measures");
      continue;
    }
    rows.push({ z: z as number[], hours: c.hours, outcome: c.outcome });
  }
  return { rows, excluded, candidates: courses.length, normSet };
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

export interface RiskGroupRow {
  label: string;
  courses: number;
  planningFrom: number;
  planningTo: number;
  coverage: number | null;
  standardError: number | null;
}

export interface CalibrationPoint {
  actual: number; // hours to proficiency, or hours so far for a censored course
  predicted: number; // leave-one-out median
  lower: number;
  upper: number;
  completed: boolean;
}

export interface MeasureWarning {
  label: string;
  n: number;
  icc: number | null;
  message: string;
}

export interface WorkbenchFit {
  deviceTypeId: number;
  measures: { id: number; code: string; label: string }[];
  normSet: { id: number; name: string };
  method: "lognormal-aft";
  cohortSize: number;
  completed: number;
  stillTraining: number;
  stopped: number;
  candidates: number;
  excluded: Partial<Record<ExclusionReason, number>>;
  coefficients: CoefficientRow[];
  covariance: number[][];
  residualSD: number;
  dfResidual: number;
  rSquared: number;
  converged: boolean;
  planningQuantile: number;
  loocvMaeHours: number;
  loocvCoverage80: number;
  loocvPlanningCoverage: number;
  loocvPlanningCoverageSE: number;
  loocvCoverageStoppedAsMiss: number | null;
  riskGroups: RiskGroupRow[];
  standardisation: { means: number[]; sds: number[] };
  /** De-identified, sorted by hours: actual (or so far), leave-one-out median and its 80 % interval. */
  calibration: CalibrationPoint[];
  reliabilityWarnings: MeasureWarning[];
}

/** A warning for every chosen measure whose test–retest reliability is poor or not known. */
export async function reliabilityWarnings(
  measures: { id: number; label: string }[],
  k: Db = db(),
): Promise<MeasureWarning[]> {
  const all = new Map((await reliabilityByMeasure(k)).map((r) => [r.measureId, r]));
  return measures.flatMap((m): MeasureWarning[] => {
    const r = all.get(m.id);
    const icc = r?.icc21 ?? null;
    if (icc === null)
      return [
        {
          label: m.label,
          n: r?.n ?? 0,
          icc,
          message: `${m.label}: how repeatable it is is not known yet (${r?.note ?? "no repeated baselines"}).`,
        },
      ];
    if (icc >= POOR_RELIABILITY) return [];
    return [
      {
        label: m.label,
        n: r?.n ?? 0,
        icc,
        message: `${m.label}: poor repeatability (ICC ${icc.toFixed(2)}${r?.icc21Lower != null && r.icc21Upper != null ? `, 95 % CI ${r.icc21Lower.toFixed(2)} to ${r.icc21Upper.toFixed(2)}` : ""}, from ${r?.n} workers tested twice); much of its spread is measurement noise.`,
      },
    ];
  });
}

const coverageOf = (c: CoverageEstimate, what: string): { coverage: number; se: number } => {
  if (c.coverage === null || c.standardError === null)
    throw unfit(`Too few past trainees were followed long enough to check ${what}.`);
  return { coverage: c.coverage, se: c.standardError };
};

/** Fit log(hours) on the cohort's z-scores as censored data, with the leave-one-out check. */
export function fitCohort(
  cohort: Cohort,
  measures: { id: number; code: string; label: string }[],
  deviceTypeId: number,
  quantile: number,
): Omit<WorkbenchFit, "reliabilityWarnings"> {
  const completed = cohort.rows.filter((r) => r.outcome === "completed").length;
  const k = measures.length;
  if (completed < k + 3) {
    throw unfit(
      `Only ${completed} past trainee${completed === 1 ? "" : "s"} reached the criterion for ${k} measure${k === 1 ? "" : "s"}: at least ${k + 3} are needed (measures + 3) for the fit and its leave-one-out check.`,
    );
  }
  let fit: ReturnType<typeof fitCensoredForecast>;
  try {
    fit = fitCensoredForecast(
      cohort.rows.map((r) => ({ x: r.z, hours: r.hours, outcome: r.outcome })),
      { quantile },
    );
  } catch (e) {
    const message = (e as Error).message;
    const j = Number(/measure (\d+) is constant/.exec(message)?.[1]);
    throw unfit(
      Number.isInteger(j)
        ? `${measures[j].label} has the same value for every past trainee, so it cannot explain differences.`
        : `The model could not be fitted: ${message}.`,
    );
  }
  const z975 = normalQuantile(0.975);
  const names = ["Intercept (cohort average)", ...measures.map((m) => m.label)];
  const coefficients = fit.model.coefficients.map((b, i) => ({
    name: names[i],
    code: i === 0 ? null : measures[i - 1].code,
    estimate: b,
    se: fit.fit.standardErrors[i],
    lower95: b - z975 * fit.fit.standardErrors[i],
    upper95: b + z975 * fit.fit.standardErrors[i],
    multiplierPerSD: Math.exp(b),
  }));
  const planning = coverageOf(fit.loocv.planningCoverage, "the planning figure");
  if (fit.loocv.centralCoverage80 === null)
    throw unfit("Too few past trainees were followed long enough to check the 80 % interval.");
  return {
    deviceTypeId,
    measures,
    normSet: cohort.normSet,
    method: "lognormal-aft",
    cohortSize: cohort.rows.length,
    completed: fit.completed,
    stillTraining: fit.stillTraining,
    stopped: fit.stopped,
    candidates: cohort.candidates,
    excluded: cohort.excluded,
    coefficients,
    covariance: fit.model.covariance,
    residualSD: fit.model.residualSD,
    dfResidual: fit.model.dfResidual,
    rSquared: fit.rSquared,
    converged: fit.fit.converged,
    planningQuantile: quantile,
    loocvMaeHours: fit.loocv.maeHours,
    loocvCoverage80: fit.loocv.centralCoverage80,
    loocvPlanningCoverage: planning.coverage,
    loocvPlanningCoverageSE: planning.se,
    loocvCoverageStoppedAsMiss: fit.loocv.planningCoverageStoppedAsMiss.coverage,
    riskGroups: fit.loocv.riskGroups.map((g) => ({
      label: g.label,
      courses: g.courses,
      planningFrom: g.planningFrom,
      planningTo: g.planningTo,
      coverage: g.coverage.coverage,
      standardError: g.coverage.standardError,
    })),
    standardisation: { means: fit.model.means, sds: fit.model.sds },
    calibration: fit.loocv.predictions
      .map((p) => ({
        actual: p.hours,
        predicted: p.median,
        lower: p.lower,
        upper: p.upper,
        completed: p.outcome === "completed",
      }))
      .sort((a, b) => a.actual - b.actual || a.predicted - b.predicted),
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

export interface WorkbenchInput {
  deviceTypeId: number;
  measureIds: number[];
  normSetId?: number | null;
}

/** Build the cohort and fit it (the workbench's "Fit" button). */
export async function fitWorkbench(input: WorkbenchInput, k: Db = db()): Promise<WorkbenchFit> {
  const measureIds = [...new Set(input.measureIds)];
  if (!(await k("device_types").where({ id: input.deviceTypeId }).first("id")))
    throw unfit("That device type does not exist.");
  const measures = await measuresById(measureIds, k);
  const cohort = await buildCohort(input.deviceTypeId, measureIds, k, input.normSetId);
  const fit = fitCohort(cohort, measures, input.deviceTypeId, await planningQuantile(k));
  return { ...fit, reliabilityWarnings: await reliabilityWarnings(measures, k) };
}

/** Completed and censored courses with model-use consent per device type (what a fit could draw on). */
export async function courseCountsByDevice(
  k: Db = db(),
): Promise<{ deviceTypeId: number; name: string; completed: number; stillTraining: number; stopped: number }[]> {
  const devices = await k("device_types").select("id", "name").orderBy("id");
  const courses = await k("device_courses").select(
    "worker_id",
    "device_type_id",
    "status",
    "hours_to_proficiency",
    "cumulative_hours",
  );
  const consent = await latestConsent(k, [...new Set(courses.map((c) => c.worker_id))], "model");
  return devices.map((d) => {
    const mine = courses.filter(
      (c) => c.device_type_id === d.id && consent.get(c.worker_id) === "given" && Number(c.cumulative_hours ?? 0) > 0,
    );
    const completed = mine.filter((c) => c.status === "proficient" && Number(c.hours_to_proficiency) > 0).length;
    const stopped = mine.filter((c) => c.status === "stopped").length;
    return { deviceTypeId: d.id, name: d.name, completed, stopped, stillTraining: mine.length - completed - stopped };
  });
}

/** Refit on the server (never trusting numbers from the browser) and store as a draft version. */
export async function saveModelVersion(
  input: WorkbenchInput & { notes?: string },
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
    const now = opts?.now ?? nowInstant();
    const [row] = await trx("model_versions")
      .insert({
        device_type_id: input.deviceTypeId,
        version_number: versionNumber,
        measure_ids: JSON.stringify(fit.measures.map((m) => m.id)),
        measure_codes: JSON.stringify(fit.measures.map((m) => m.code)),
        norm_set_id: fit.normSet.id,
        method: fit.method,
        cohort_size: fit.cohortSize,
        completed_courses: fit.completed,
        still_training_courses: fit.stillTraining,
        stopped_courses: fit.stopped,
        excluded: JSON.stringify(fit.excluded),
        coefficients: JSON.stringify(fit.coefficients.map((c) => c.estimate)),
        standard_errors: JSON.stringify(fit.coefficients.map((c) => c.se)),
        covariance: JSON.stringify(fit.covariance),
        residual_sd: fit.residualSD,
        df_residual: fit.dfResidual,
        ridge: 0,
        standardisation: JSON.stringify(fit.standardisation),
        loocv_mae_hours: fit.loocvMaeHours,
        r_squared: fit.rSquared,
        loocv_coverage80: fit.loocvCoverage80,
        planning_quantile: fit.planningQuantile,
        loocv_planning_coverage: fit.loocvPlanningCoverage,
        loocv_planning_coverage_se: fit.loocvPlanningCoverageSE,
        loocv_coverage_stopped_as_miss: fit.loocvCoverageStoppedAsMiss,
        risk_groups: JSON.stringify(fit.riskGroups),
        calibration: JSON.stringify(
          fit.calibration.map((c) => [c.actual, c.predicted, c.lower, c.upper, c.completed ? 1 : 0]),
        ),
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

/** The draft's checks before its status changes: a version exists, is a draft, and the approver did not fit it. */
async function approvable(trx: Db, versionId: number, userId: number | null) {
  const v = await trx("model_versions").where({ id: versionId }).first();
  if (!v) throw notFound("That model version does not exist.");
  if (v.status !== "draft") throw conflict(`Version ${v.version_number} is ${v.status}; only a draft can be approved.`);
  if (userId !== null && v.fitted_by === userId)
    throw conflict("A version must be approved by an assessor other than the one who fitted it.");
  return v;
}

async function makeApproved(trx: Db, v: Row, userId: number, now?: string): Promise<number> {
  const at = now ?? nowInstant();
  await trx("model_versions")
    .where({ device_type_id: v.device_type_id, status: "approved" })
    .update({ status: "retired", retired_by: userId, retired_at: at });
  await trx("model_versions").where({ id: v.id }).update({ status: "approved", approved_by: userId, approved_at: at });
  return refreshForecastsForDeviceType(trx, v.device_type_id, userId, now);
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
    const v = await approvable(trx, versionId, userId);
    return { forecasts: await makeApproved(trx, v, userId, opts?.now) };
  };
  return k ? run(k) : db().transaction(run);
}

export interface ApprovalPreview {
  /** Workers whose stored forecast on this device type would be new, removed or different. */
  changed: number;
  added: number;
  removed: number;
  unchanged: number;
}

const ROLLBACK = Symbol("preview");

/**
 * What approving would do to the stored forecasts, found by approving inside a transaction that is then
 * rolled back (the same code path as the approval itself, so the count cannot drift from it).
 */
export async function approvalPreview(versionId: number, k: Db = db()): Promise<ApprovalPreview | null> {
  const v = await k("model_versions").where({ id: versionId }).first();
  if (v?.status !== "draft") return null;
  const snapshot = async (trx: Db) =>
    new Map(
      (
        await trx("forecasts")
          .where({ device_type_id: v.device_type_id })
          .select("worker_id", "median_hours", "lower_hours", "upper_hours", "planning_hours")
      ).map((f) => [
        f.worker_id,
        [f.median_hours, f.lower_hours, f.upper_hours, f.planning_hours].map(Number).join(" "),
      ]),
    );
  let preview: ApprovalPreview | null = null;
  await k
    .transaction(async (trx) => {
      const before = await snapshot(trx);
      const fitter = Number(v.fitted_by ?? 0);
      await makeApproved(trx, await approvable(trx, versionId, null), fitter);
      const after = await snapshot(trx);
      let added = 0;
      let removed = 0;
      let changed = 0;
      for (const [id, numbers] of after) {
        if (!before.has(id)) added++;
        else if (before.get(id) !== numbers) changed++;
      }
      for (const id of before.keys()) if (!after.has(id)) removed++;
      preview = { changed: changed + added + removed, added, removed, unchanged: after.size - added - changed };
      throw ROLLBACK;
    })
    .catch((e) => {
      if (e !== ROLLBACK) throw e;
    });
  return preview;
}

/** Retire a version; forecasts made with it are withdrawn (plans then need an approved version again). */
export async function retireModelVersion(versionId: number, userId: number): Promise<void> {
  await db().transaction(async (trx) => {
    const v = await trx("model_versions").where({ id: versionId }).first();
    if (!v) throw notFound("That model version does not exist.");
    if (v.status === "retired") throw conflict(`Version ${v.version_number} is already retired.`);
    await trx("model_versions")
      .where({ id: versionId })
      .update({ status: "retired", retired_by: userId, retired_at: nowInstant() });
    await trx("forecasts").where({ model_version_id: versionId }).del();
  });
}

export interface DriftStats {
  /** Courses judged against their planning figure (finished, or still running, at the quantile in force). */
  courses: number;
  finished: number;
  within: number;
  missed: number;
  pending: number;
  /** Kaplan–Meier share finishing within the planning figure, with Greenwood SE. */
  coverage: number | null;
  standardError: number | null;
  /** Mean |actual − median| over finished courses. */
  maeHours: number | null;
  target: number;
  alpha: number;
  pValue: number | null;
  upperBound: number | null;
  alarm: boolean;
}

/**
 * Drift of each version's planning figure: every course planned with the version — finished (its drift
 * record) or still running (its stored forecast and hours so far) — counts as a miss as soon as its hours
 * pass the figure. The alarm is the one-sided exact binomial test of coverage below the planning quantile
 * at level DRIFT_ALPHA (app/compute/calibration.ts). Only figures made at the quantile in force are judged.
 */
export async function driftByVersion(k: Db = db()): Promise<Map<number, DriftStats>> {
  const target = await planningQuantile(k);
  const sameQuantile = (q: unknown) => q != null && Math.abs(Number(q) - target) < 1e-9;
  const outcomes = await k("forecast_outcomes")
    .select(
      "model_version_id",
      "worker_id",
      "device_type_id",
      "actual_hours",
      "forecast_median_hours",
      "forecast_planning_hours",
      "planning_quantile",
    )
    .orderBy("id");
  const running = await k("forecasts as f")
    .join("device_courses as c", function () {
      this.on("c.worker_id", "=", "f.worker_id").andOn("c.device_type_id", "=", "f.device_type_id");
    })
    .whereNot("c.status", "proficient")
    .select(
      "f.model_version_id",
      "f.worker_id",
      "f.planning_hours",
      "f.planning_quantile",
      "c.status",
      "c.cumulative_hours",
    )
    .orderBy("f.id");
  const byVersion = new Map<number, { courses: PlannedCourse[]; abs: number; finished: number }>();
  const entry = (id: number) => {
    let e = byVersion.get(id);
    if (!e) {
      e = { courses: [], abs: 0, finished: 0 };
      byVersion.set(id, e);
    }
    return e;
  };
  const finishedKeys = new Set<string>();
  for (const r of outcomes) {
    if (!sameQuantile(r.planning_quantile) || r.forecast_planning_hours == null) continue;
    const e = entry(r.model_version_id);
    const actual = Number(r.actual_hours);
    e.courses.push({ planningHours: Number(r.forecast_planning_hours), hoursSoFar: actual, finishedAtHours: actual });
    e.abs += Math.abs(actual - Number(r.forecast_median_hours));
    e.finished++;
    finishedKeys.add(`${r.model_version_id}:${r.worker_id}`);
  }
  for (const r of running) {
    if (!sameQuantile(r.planning_quantile) || finishedKeys.has(`${r.model_version_id}:${r.worker_id}`)) continue;
    entry(r.model_version_id).courses.push({
      planningHours: Number(r.planning_hours),
      hoursSoFar: Number(r.cumulative_hours ?? 0),
      finishedAtHours: null,
      stopped: r.status === "stopped",
    });
  }
  const out = new Map<number, DriftStats>();
  for (const [id, e] of byVersion) {
    const coverage = planningFigureCoverage(e.courses);
    const alarm = coverageAlarm(e.courses, { target, alpha: DRIFT_ALPHA });
    out.set(id, {
      courses: e.courses.length,
      finished: e.finished,
      within: coverage.within,
      missed: coverage.missed,
      pending: coverage.pending,
      coverage: coverage.coverage,
      standardError: coverage.standardError,
      maeHours: e.finished ? e.abs / e.finished : null,
      target,
      alpha: DRIFT_ALPHA,
      pValue: alarm.pValue,
      upperBound: alarm.upperBound,
      alarm: alarm.alarm,
    });
  }
  return out;
}

const noDrift = (target: number): DriftStats => ({
  courses: 0,
  finished: 0,
  within: 0,
  missed: 0,
  pending: 0,
  coverage: null,
  standardError: null,
  maeHours: null,
  target,
  alpha: DRIFT_ALPHA,
  pValue: null,
  upperBound: null,
  alarm: false,
});

export interface VersionSummary {
  id: number;
  deviceTypeId: number;
  deviceTypeName: string;
  versionNumber: number;
  status: "draft" | "approved" | "retired";
  method: "lognormal-aft" | "least-squares";
  measures: string[];
  measureIds: number[];
  normSet: { id: number; name: string } | null;
  cohortSize: number;
  completed: number | null;
  stillTraining: number | null;
  stopped: number | null;
  loocvMaeHours: number;
  rSquared: number;
  loocvCoverage80: number;
  planningQuantile: number | null;
  loocvPlanningCoverage: number | null;
  loocvPlanningCoverageSE: number | null;
  loocvCoverageStoppedAsMiss: number | null;
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
    .leftJoin("norm_sets as n", "n.id", "v.norm_set_id")
    .select(
      "v.*",
      "d.name as device_type_name",
      "f.display_name as fitted_name",
      "a.display_name as approved_name",
      "r.display_name as retired_name",
      "n.name as norm_set_name",
    );
}

const numberOrNull = (v: unknown) => (v == null ? null : Number(v));

function toSummary(r: Row, drift: Map<number, DriftStats>, target: number): VersionSummary {
  const codes: string[] = JSON.parse(r.measure_codes);
  return {
    id: r.id,
    deviceTypeId: r.device_type_id,
    deviceTypeName: r.device_type_name,
    versionNumber: r.version_number,
    status: r.status,
    method: r.method === "lognormal-aft" ? "lognormal-aft" : "least-squares",
    measures: codes.map((c) => labelFor(c)),
    measureIds: JSON.parse(r.measure_ids),
    normSet: r.norm_set_id == null ? null : { id: r.norm_set_id, name: r.norm_set_name },
    cohortSize: r.cohort_size,
    completed: numberOrNull(r.completed_courses),
    stillTraining: numberOrNull(r.still_training_courses),
    stopped: numberOrNull(r.stopped_courses),
    loocvMaeHours: Number(r.loocv_mae_hours),
    rSquared: Number(r.r_squared),
    loocvCoverage80: Number(r.loocv_coverage80),
    planningQuantile: numberOrNull(r.planning_quantile),
    loocvPlanningCoverage: numberOrNull(r.loocv_planning_coverage),
    loocvPlanningCoverageSE: numberOrNull(r.loocv_planning_coverage_se),
    loocvCoverageStoppedAsMiss: numberOrNull(r.loocv_coverage_stopped_as_miss),
    fittedBy: r.fitted_name ?? null,
    fittedById: r.fitted_by ?? null,
    fittedAt: String(r.fitted_at),
    approvedBy: r.approved_name ?? null,
    approvedAt: r.approved_at ? String(r.approved_at) : null,
    retiredBy: r.retired_name ?? null,
    retiredAt: r.retired_at ? String(r.retired_at) : null,
    drift: drift.get(r.id) ?? noDrift(target),
  };
}

export async function listModelVersions(k: Db = db()): Promise<VersionSummary[]> {
  const [rows, drift, target] = await Promise.all([
    summaryQuery(k).orderBy([{ column: "v.device_type_id" }, { column: "v.version_number", order: "desc" }]),
    driftByVersion(k),
    planningQuantile(k),
  ]);
  return rows.map((r) => toSummary(r, drift, target));
}

export interface VersionDetail extends VersionSummary {
  notes: string | null;
  residualSD: number;
  dfResidual: number;
  excluded: Partial<Record<ExclusionReason, number>>;
  coefficients: CoefficientRow[];
  calibration: CalibrationPoint[];
  riskGroups: RiskGroupRow[];
  standardisation: { means: number[]; sds: number[] };
}

export async function getModelVersion(id: number, k: Db = db()): Promise<VersionDetail | null> {
  const r = await summaryQuery(k).where("v.id", id).first();
  if (!r) return null;
  const summary = toSummary(r, await driftByVersion(k), await planningQuantile(k));
  const codes: string[] = JSON.parse(r.measure_codes);
  const coef: number[] = JSON.parse(r.coefficients);
  const se: number[] = JSON.parse(r.standard_errors);
  // Censored maximum likelihood: Wald intervals; least-squares versions: t with the residual df.
  const crit =
    summary.method === "lognormal-aft" ? normalQuantile(0.975) : studentTQuantile(0.975, Number(r.df_residual));
  return {
    ...summary,
    notes: r.notes ?? null,
    residualSD: Number(r.residual_sd),
    dfResidual: Number(r.df_residual),
    excluded: JSON.parse(r.excluded),
    coefficients: coef.map((b, i) => ({
      name: i === 0 ? "Intercept (cohort average)" : labelFor(codes[i - 1]),
      code: i === 0 ? null : codes[i - 1],
      estimate: b,
      se: se[i],
      lower95: b - crit * se[i],
      upper95: b + crit * se[i],
      multiplierPerSD: Math.exp(b),
    })),
    calibration: (JSON.parse(r.calibration) as number[][]).map(([actual, predicted, lower, upper, completed]) => ({
      actual,
      predicted,
      lower,
      upper,
      completed: completed === undefined ? true : completed === 1,
    })),
    riskGroups: r.risk_groups ? JSON.parse(r.risk_groups) : [],
    standardisation: JSON.parse(r.standardisation),
  };
}

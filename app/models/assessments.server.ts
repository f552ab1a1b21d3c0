import { createHash } from "node:crypto";
import { parse as parseCsvSync } from "csv-parse/sync";
import type { Scope } from "~/auth/scope";
import { zScore } from "~/compute/features";
import type { SwayProcessing } from "~/compute/features/sway-processing";
import { analyseTrace, parseTrace, type TraceIssue, type TraceKind } from "~/compute/trace-parsing";
import { nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import { UserError } from "~/errors";
import { MAX_TRACE_ROWS } from "~/schemas/assessment";
import { assertConsent, setStage } from "./consent.server";
import { refreshForecastsForWorker, type WorkerForecastRefresh } from "./forecast.server";
import { listMeasures, type Measure } from "./measures.server";
import { defaultNorms, normsOf } from "./norms.server";
import { whereWorkerInScope, workersWithPlace } from "./workers.server";

// Assessment sessions, manual results and trace uploads. Every write checks
// `assessment` consent inside its own transaction, whatever the caller (docs/consent-and-disclosure.md).
// Saving or re-scoring baseline results recomputes the worker's forecasts in the same transaction.

export interface StaffWorker {
  id: number;
  employeeNumber: string;
  name: string;
  email: string | null;
  stage: string;
  siteId: number;
  site: string;
  department: string;
}

/** A worker as staff see the header of the record; null when outside the principal's scope. */
export async function workerForStaff(scope: Scope, workerId: number, k: Db = db()): Promise<StaffWorker | null> {
  const q = workersWithPlace(k)
    .where("workers.id", workerId)
    .first(
      "workers.id",
      "workers.employee_number",
      "workers.given_name",
      "workers.family_name",
      "workers.email",
      "workers.stage",
      "workers.site_id",
      "s.name as site",
      "d.name as department",
    );
  const w = await whereWorkerInScope(q, scope);
  if (!w) return null;
  return {
    id: w.id,
    employeeNumber: w.employee_number,
    name: `${w.given_name} ${w.family_name}`,
    email: w.email ?? null,
    stage: w.stage,
    siteId: w.site_id,
    site: w.site,
    department: w.department,
  };
}

export async function createSession(input: {
  workerId: number;
  assessedOn: string;
  notes?: string;
  assessorUserId: number;
}): Promise<number> {
  return db().transaction(async (trx) => {
    await assertConsent(input.workerId, "assessment", trx);
    const [r] = await trx("assessment_sessions")
      .insert({
        worker_id: input.workerId,
        assessed_on: input.assessedOn,
        assessor_user_id: input.assessorUserId,
        notes: input.notes || null,
        created_at: nowInstant(),
      })
      .returning("id");
    return r.id;
  });
}

export interface ResultRow {
  measureId: number;
  code: string;
  name: string;
  unit: string;
  higherIsBetter: boolean;
  value: number;
  z: number | null;
  normSetId: number | null;
  normSetName: string | null;
  traceUploadId: number | null;
}
export interface UploadRow {
  id: number;
  kind: TraceKind;
  filename: string;
  sha256: string;
  sizeBytes: number;
  rowCount: number;
  sampleRateHz: number | null;
  /** The common processing the measures were computed after (sway traces); null for other kinds. */
  processing: SwayProcessing | null;
  computed: Record<string, number>;
  createdAt: string;
}
export interface SessionRow {
  id: number;
  assessedOn: string;
  assessor: string | null;
  notes: string | null;
  results: ResultRow[];
  uploads: UploadRow[];
}

/** A worker's sessions, oldest first, with their results and uploads. */
export async function sessionsForWorker(workerId: number, k: Db = db()): Promise<SessionRow[]> {
  const sessions = await k("assessment_sessions as s")
    .leftJoin("users as u", "u.id", "s.assessor_user_id")
    .where("s.worker_id", workerId)
    .select("s.id", "s.assessed_on", "s.notes", "u.display_name as assessor")
    .orderBy([{ column: "s.assessed_on" }, { column: "s.id" }]);
  if (sessions.length === 0) return [];
  const ids = sessions.map((s) => s.id);
  const results = await k("assessment_results as r")
    .join("measures as m", "m.id", "r.measure_id")
    .leftJoin("norm_sets as n", "n.id", "r.norm_set_id")
    .whereIn("r.session_id", ids)
    .select(
      "r.session_id",
      "r.measure_id",
      "r.value",
      "r.z_score",
      "r.norm_set_id",
      "r.trace_upload_id",
      "m.code",
      "m.name",
      "m.unit",
      "m.higher_is_better",
      "n.name as norm_name",
    )
    .orderBy("m.id");
  const uploads = await k("trace_uploads").whereIn("session_id", ids).select("*").orderBy("id");
  return sessions.map((s) => ({
    id: s.id,
    assessedOn: s.assessed_on as string,
    assessor: s.assessor ?? null,
    notes: s.notes ?? null,
    results: results
      .filter((r) => r.session_id === s.id)
      .map((r) => ({
        measureId: r.measure_id,
        code: r.code,
        name: r.name,
        unit: r.unit,
        higherIsBetter: Boolean(r.higher_is_better),
        value: r.value,
        z: r.z_score ?? null,
        normSetId: r.norm_set_id ?? null,
        normSetName: r.norm_name ?? null,
        traceUploadId: r.trace_upload_id ?? null,
      })),
    uploads: uploads
      .filter((u) => u.session_id === s.id)
      .map((u) => ({
        id: u.id,
        kind: u.kind,
        filename: u.filename,
        sha256: u.sha256,
        sizeBytes: u.size_bytes,
        rowCount: u.row_count,
        sampleRateHz: u.sample_rate_hz ?? null,
        processing: processingOf(u),
        computed: JSON.parse(u.computed),
        createdAt: String(u.created_at),
      })),
  }));
}

function processingOf(u: {
  sample_rate_hz: number | null;
  resampled_rate_hz: number | null;
  filter: string | null;
  cutoff_hz: number | null;
  duration_seconds: number | null;
}): SwayProcessing | null {
  if (u.resampled_rate_hz == null || u.filter == null || u.cutoff_hz == null || u.duration_seconds == null) return null;
  return {
    recordedRateHz: Number(u.sample_rate_hz),
    resampledRateHz: Number(u.resampled_rate_hz),
    filter: u.filter,
    cutoffHz: Number(u.cutoff_hz),
    durationSeconds: Number(u.duration_seconds),
  };
}

async function sessionOf(trx: Db, workerId: number, sessionId: number) {
  const s = await trx("assessment_sessions").where({ id: sessionId, worker_id: workerId }).first("id");
  if (!s) throw new UserError("That assessment session does not exist for this worker.");
}

function scoreOf(measure: Measure, value: number, norm: { normSetId: number; mean: number; sd: number } | undefined) {
  if (!norm || !(norm.sd > 0)) return { z_score: null, norm_set_id: null };
  return { z_score: zScore(value, norm.mean, norm.sd, measure.higherIsBetter), norm_set_id: norm.normSetId };
}

async function upsertResults(
  trx: Db,
  sessionId: number,
  rows: { measure: Measure; value: number; traceUploadId: number | null }[],
) {
  const norms = await defaultNorms(trx);
  const at = nowInstant();
  for (const r of rows) {
    await trx("assessment_results").where({ session_id: sessionId, measure_id: r.measure.id }).del();
    await trx("assessment_results").insert({
      session_id: sessionId,
      measure_id: r.measure.id,
      value: r.value,
      trace_upload_id: r.traceUploadId,
      created_at: at,
      ...scoreOf(r.measure, r.value, norms.get(r.measure.id)),
    });
  }
}

async function markBaselined(trx: Db, workerId: number, userId: number) {
  const w = await trx("workers").where({ id: workerId }).first("stage");
  if (w?.stage === "consented" || w?.stage === "invited") await setStage(trx, workerId, "baselined", userId);
}

/** Manual scores for active manual measures; replaces earlier values of the same measures in the session. */
export async function saveManualResults(input: {
  workerId: number;
  sessionId: number;
  values: { measureId: number; value: number }[];
  userId: number;
}) {
  return db().transaction(async (trx) => {
    await assertConsent(input.workerId, "assessment", trx);
    await sessionOf(trx, input.workerId, input.sessionId);
    const measures = new Map(
      (await listMeasures({ activeOnly: true }, trx)).filter((m) => m.entry === "manual").map((m) => [m.id, m]),
    );
    const rows = input.values.map((v) => {
      const m = measures.get(v.measureId);
      if (!m) throw new UserError(`Measure ${v.measureId} is not an active manual measure.`);
      if (!Number.isFinite(v.value))
        throw new UserError(`${m.name}: the score must be a finite number.`, { field: `m.${m.id}` });
      return { measure: m, value: v.value, traceUploadId: null };
    });
    await upsertResults(trx, input.sessionId, rows);
    await markBaselined(trx, input.workerId, input.userId);
    return { count: rows.length, forecasts: await refreshForecastsForWorker(trx, input.workerId, input.userId) };
  });
}

/** Splits CSV text into cells; csv-parse errors become one issue naming the line. */
export function csvCells(
  text: string,
  maxRows = MAX_TRACE_ROWS,
): { ok: true; rows: string[][] } | { ok: false; errors: TraceIssue[] } {
  try {
    const rows = parseCsvSync(text, {
      bom: true,
      relax_column_count: true,
      skip_empty_lines: true,
      trim: true,
      to_line: maxRows + 2,
    }) as string[][];
    return { ok: true, rows };
  } catch (e) {
    const err = e as { lines?: number; message: string };
    return {
      ok: false,
      errors: [
        { row: err.lines, message: `the file is not readable CSV: ${err.message.replace(/^Invalid /, "invalid ")}` },
      ],
    };
  }
}

export type TraceSaveResult =
  | {
      ok: true;
      forecasts: WorkerForecastRefresh[];
      uploadId: number;
      kind: TraceKind;
      computed: Record<string, number>;
      scored: string[];
      rowCount: number;
      sampleRateHz: number | null;
      processing: SwayProcessing | null;
      sha256: string;
      sizeBytes: number;
    }
  | { ok: false; errors: TraceIssue[] };

/**
 * Parses, computes and stores one uploaded trace: the upload row keeps the file's SHA-256, size, row
 * count, sample rate, the processing before the measures (sway: resampled rate, filter, cut-off, duration)
 * and every computed value; active trace measures of that kind become results. A refused trace stores nothing.
 */
export async function saveTrace(input: {
  workerId: number;
  sessionId: number;
  kind: TraceKind;
  filename: string;
  bytes: Uint8Array;
  sampleRateHz?: number;
  userId: number;
}): Promise<TraceSaveResult> {
  // Refuse before parsing when consent is missing, so an unconsented file is not even read.
  await assertConsent(input.workerId, "assessment", db());
  const text = new TextDecoder("utf-8", { fatal: false }).decode(input.bytes);
  const cells = csvCells(text);
  if (!cells.ok) return cells;
  const parsed = parseTrace(input.kind, cells.rows, {
    maxRows: MAX_TRACE_ROWS,
    declaredSampleRateHz: input.sampleRateHz,
  });
  if (!parsed.ok) return parsed;
  let computed: Record<string, number>;
  let processing: SwayProcessing | null;
  try {
    ({ measures: computed, processing } = analyseTrace(input.kind, parsed));
  } catch (e) {
    return {
      ok: false,
      errors: [{ message: `the measures cannot be computed from this recording: ${(e as Error).message}` }],
    };
  }
  // A value that overflows (NaN, ±Infinity) would reach the z-scores: refuse it, naming the measure.
  const unusable = Object.keys(computed).filter((k) => !Number.isFinite(computed[k]));
  if (unusable.length)
    return {
      ok: false,
      errors: unusable.map((k) => ({
        column: k,
        message: `${k} cannot be computed from this recording (the values are too large or too close together)`,
      })),
    };
  const sha256 = createHash("sha256").update(input.bytes).digest("hex");
  const rowCount = cells.rows.length - 1;
  const sampleRateHz = "sampleRateHz" in parsed && parsed.sampleRateHz !== undefined ? parsed.sampleRateHz : null;
  return db().transaction(async (trx) => {
    await assertConsent(input.workerId, "assessment", trx);
    await sessionOf(trx, input.workerId, input.sessionId);
    const [u] = await trx("trace_uploads")
      .insert({
        session_id: input.sessionId,
        kind: input.kind,
        filename: input.filename.slice(0, 255),
        sha256,
        size_bytes: input.bytes.byteLength,
        row_count: rowCount,
        sample_rate_hz: sampleRateHz,
        resampled_rate_hz: processing?.resampledRateHz ?? null,
        filter: processing?.filter ?? null,
        cutoff_hz: processing?.cutoffHz ?? null,
        duration_seconds: processing?.durationSeconds ?? null,
        computed: JSON.stringify(computed),
        uploaded_by: input.userId,
        created_at: nowInstant(),
      })
      .returning("id");
    const measures = (await listMeasures({ activeOnly: true }, trx)).filter(
      (m) => m.entry === "trace" && m.traceKind === input.kind && m.code in computed,
    );
    await upsertResults(
      trx,
      input.sessionId,
      measures.map((m) => ({ measure: m, value: computed[m.code], traceUploadId: u.id })),
    );
    if (measures.length) await markBaselined(trx, input.workerId, input.userId);
    const forecasts = measures.length ? await refreshForecastsForWorker(trx, input.workerId, input.userId) : [];
    return {
      ok: true as const,
      forecasts,
      uploadId: u.id,
      kind: input.kind,
      computed,
      scored: measures.map((m) => m.code),
      rowCount,
      sampleRateHz,
      processing,
      sha256,
      sizeBytes: input.bytes.byteLength,
    };
  });
}

/** Re-scores a session against one norm set (or the default per measure when null). */
export async function rescoreSession(input: {
  workerId: number;
  sessionId: number;
  normSetId: number | null;
  userId: number | null;
}) {
  return db().transaction(async (trx) => {
    await assertConsent(input.workerId, "assessment", trx);
    await sessionOf(trx, input.workerId, input.sessionId);
    const norms = input.normSetId ? await normsOf(input.normSetId, trx) : await defaultNorms(trx);
    const measures = new Map((await listMeasures({}, trx)).map((m) => [m.id, m]));
    const rows = await trx("assessment_results")
      .where({ session_id: input.sessionId })
      .select("id", "measure_id", "value");
    let scored = 0;
    for (const r of rows) {
      const s = scoreOf(measures.get(r.measure_id)!, r.value, norms.get(r.measure_id));
      if (s.norm_set_id) scored++;
      await trx("assessment_results").where({ id: r.id }).update(s);
    }
    return {
      scored,
      total: rows.length,
      forecasts: await refreshForecastsForWorker(trx, input.workerId, input.userId),
    };
  });
}

import type { Knex } from "knex";
import { type Db, db } from "~/db.server";
import { CONSENT_PURPOSES, type ConsentPurpose } from "./consent-texts.server";
import { eraseForecasts } from "./forecast.server";

// Consent per purpose (DESIGN §4): recorded against the text version in force, witnessed by an
// assessor, with history. Withdrawal is the ONE place where a worker's identifiable data are erased:
// see withdrawConsent() and ERASURE_STEPS below — later areas add their tables there.

export { CONSENT_PURPOSES, type ConsentPurpose };

export class ConsentRequiredError extends Error {
  constructor(
    readonly workerId: number,
    readonly purpose: ConsentPurpose,
  ) {
    super(`This worker has not given ${purpose} consent (or has withdrawn it); nothing was recorded.`);
  }
}
export class ConsentInputError extends Error {
  constructor(
    message: string,
    readonly field?: string,
  ) {
    super(message);
  }
}

export type ConsentStatus = "given" | "withdrawn" | "none";
export interface PurposeState {
  status: ConsentStatus;
  version: string | null; // text version consented to (given) or withdrawn from
  currentVersion: string | null; // text version in force today
  needsRenewal: boolean; // given, but against an older text version
  at: string | null;
}
export type ConsentState = Record<ConsentPurpose, PurposeState>;

const today = () => new Date().toISOString().slice(0, 10);

async function currentTexts(k: Db, on = today()) {
  const rows = await k("consent_text_versions")
    .where("effective_from", "<=", on)
    .orderBy([
      { column: "effective_from", order: "desc" },
      { column: "id", order: "desc" },
    ])
    .select("id", "purpose", "version", "body", "effective_from");
  const out: Partial<Record<ConsentPurpose, { id: number; version: string; body: string; effectiveFrom: string }>> = {};
  for (const r of rows)
    if (!out[r.purpose as ConsentPurpose])
      out[r.purpose as ConsentPurpose] = {
        id: r.id,
        version: r.version,
        body: r.body,
        effectiveFrom: r.effective_from as string,
      };
  return out;
}
export async function currentConsentTexts(k: Db = db()) {
  return currentTexts(k);
}

/** Consent state per purpose for many workers at once (the latest record per purpose decides). */
export async function consentStates(workerIds: number[], k: Db = db()): Promise<Map<number, ConsentState>> {
  const current = await currentTexts(k);
  const out = new Map<number, ConsentState>();
  for (const id of workerIds) {
    out.set(
      id,
      Object.fromEntries(
        CONSENT_PURPOSES.map((p) => [
          p,
          { status: "none", version: null, currentVersion: current[p]?.version ?? null, needsRenewal: false, at: null },
        ]),
      ) as ConsentState,
    );
  }
  for (let i = 0; i < workerIds.length; i += 500) {
    const rows = await k("consent_records as c")
      .join("consent_text_versions as t", "t.id", "c.text_version_id")
      .whereIn("c.worker_id", workerIds.slice(i, i + 500))
      .select(
        "c.id",
        "c.worker_id",
        "c.purpose",
        "c.status",
        "c.given_at",
        "c.withdrawn_at",
        "c.text_version_id",
        "t.version",
      )
      .orderBy("c.id", "desc");
    const seen = new Set<string>();
    for (const r of rows) {
      const key = `${r.worker_id}:${r.purpose}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const p = r.purpose as ConsentPurpose;
      const cur = current[p];
      out.get(r.worker_id)![p] = {
        status: r.status,
        version: r.version,
        currentVersion: cur?.version ?? null,
        needsRenewal: r.status === "given" && cur != null && cur.id !== r.text_version_id,
        at: String(r.status === "given" ? r.given_at : r.withdrawn_at),
      };
    }
  }
  return out;
}

export async function consentState(workerId: number, k: Db = db()): Promise<ConsentState> {
  return (await consentStates([workerId], k)).get(workerId)!;
}

/** True when the worker's latest record for the purpose is a given consent. */
export async function hasConsent(workerId: number, purpose: ConsentPurpose, k: Db = db()): Promise<boolean> {
  const last = await k("consent_records").where({ worker_id: workerId, purpose }).orderBy("id", "desc").first("status");
  return last?.status === "given";
}

/** The data layer's gate: throws ConsentRequiredError unless consent for the purpose is given. */
export async function assertConsent(workerId: number, purpose: ConsentPurpose, k: Db): Promise<void> {
  if (!(await hasConsent(workerId, purpose, k))) throw new ConsentRequiredError(workerId, purpose);
}

export async function consentHistory(workerId: number, k: Db = db()) {
  const rows = await k("consent_records as c")
    .join("consent_text_versions as t", "t.id", "c.text_version_id")
    .leftJoin("users as w", "w.id", "c.witness_user_id")
    .leftJoin("users as r", "r.id", "c.recorded_by")
    .where("c.worker_id", workerId)
    .select(
      "c.id",
      "c.purpose",
      "c.status",
      "c.given_at",
      "c.withdrawn_at",
      "t.version",
      "w.display_name as witness",
      "r.display_name as recorder",
    )
    .orderBy("c.id", "desc");
  return rows.map((r) => ({
    id: r.id as number,
    purpose: r.purpose as ConsentPurpose,
    status: r.status as "given" | "withdrawn",
    version: r.version as string,
    at: String(r.status === "given" ? r.given_at : r.withdrawn_at),
    witness: (r.witness as string) ?? null,
    recordedBy: (r.recorder as string) ?? null,
  }));
}

/** Records a readiness stage change with actor and time (DESIGN §2). No-op when the stage is unchanged. */
export async function setStage(
  trx: Db,
  workerId: number,
  to: string,
  actorUserId: number | null,
  at = new Date().toISOString(),
): Promise<void> {
  const w = await trx("workers").where({ id: workerId }).first("stage");
  if (!w || w.stage === to) return;
  await trx("workers").where({ id: workerId }).update({ stage: to, updated_at: at });
  await trx("stage_changes").insert({
    worker_id: workerId,
    from_stage: w.stage,
    to_stage: to,
    actor_user_id: actorUserId,
    at,
  });
}

async function isAssessor(k: Db, userId: number): Promise<boolean> {
  const r = await k("role_assignments as a")
    .join("users as u", "u.id", "a.user_id")
    .where({ "a.user_id": userId, "a.role": "assessor" })
    .where("u.active", true)
    .first("a.id");
  return Boolean(r);
}

/** Witnesses: active users holding the assessor role (for the consent form). */
export async function listWitnesses(k: Db = db()) {
  return k("users as u")
    .join("role_assignments as a", "a.user_id", "u.id")
    .where({ "a.role": "assessor" })
    .where("u.active", true)
    .distinct("u.id", "u.display_name")
    .orderBy("u.display_name") as Promise<{ id: number; display_name: string }[]>;
}

/**
 * Records given consent for each purpose against the text version in force today, in one transaction.
 * Recording again for a purpose already given (e.g. after a new text version) adds a renewal row.
 */
export async function recordConsent(input: {
  workerId: number;
  purposes: ConsentPurpose[];
  witnessUserId: number;
  recordedBy: number;
}) {
  if (input.purposes.length === 0) throw new ConsentInputError("Choose at least one purpose.", "purposes");
  return db().transaction(async (trx) => {
    if (!(await isAssessor(trx, input.witnessUserId)))
      throw new ConsentInputError("The witness must be an active assessor.", "witnessUserId");
    const texts = await currentTexts(trx);
    const at = new Date().toISOString();
    for (const purpose of input.purposes) {
      const text = texts[purpose];
      if (!text)
        throw new ConsentInputError(
          `There is no ${purpose} consent text in force; an admin must add one first.`,
          "purposes",
        );
      await trx("consent_records").insert({
        worker_id: input.workerId,
        purpose,
        text_version_id: text.id,
        status: "given",
        given_at: at,
        witness_user_id: input.witnessUserId,
        recorded_by: input.recordedBy,
        created_at: at,
      });
    }
    const w = await trx("workers").where({ id: input.workerId }).first("stage");
    if (input.purposes.includes("assessment") && (w.stage === "invited" || w.stage === "withdrawn")) {
      await setStage(trx, input.workerId, "consented", input.recordedBy, at);
    }
  });
}

// ── Erasure on withdrawal ───────────────────────────────────────────────────────────────────────
// Each step deletes rows (never flags them) inside the withdrawal's transaction. Later areas add
// their steps here (forecasts, plan entries, cohort rows, …) so that one call erases everything.
export interface ErasureStep {
  /** Which withdrawn purpose triggers this step. */
  purposes: ConsentPurpose[];
  /** What it erases, as counted in the result. */
  label: string;
  run: (trx: Knex.Transaction, workerId: number) => Promise<number>;
}

async function deleteIfTable(
  trx: Knex.Transaction,
  table: string,
  where: (q: Knex.QueryBuilder) => Knex.QueryBuilder,
): Promise<number> {
  if (!(await trx.schema.hasTable(table))) return 0;
  return Number(await where(trx(table)).del());
}

/**
 * Takes the worker out of the plans inside a transaction: future scheduled sessions cancelled, courses that
 * were only planned dropped, a forecast/planned stage set back to baselined. Runs as an ERASURE_STEPS
 * step, inside the withdrawal's transaction. Returns sessions cancelled.
 */
export async function erasePlanEntries(
  trx: Db,
  workerId: number,
  userId: number | null = null,
  now = new Date(),
): Promise<number> {
  const at = now.toISOString();
  const n = Number(
    await trx("training_sessions")
      .where({ worker_id: workerId, status: "scheduled" })
      .where("scheduled_start", ">=", at)
      .update({
        status: "cancelled",
        notes: "Cancelled: the worker withdrew consent.",
        logged_by: userId,
        logged_at: at,
      }),
  );
  await trx("device_courses").where({ worker_id: workerId, status: "planned" }).del();
  const w = await trx("workers").where({ id: workerId }).first("stage");
  if (w && (w.stage === "planned" || w.stage === "forecast")) await setStage(trx, workerId, "baselined", userId, at);
  return n;
}

export const ERASURE_STEPS: ErasureStep[] = [
  {
    purposes: ["assessment"],
    label: "assessment results",
    run: (trx, id) =>
      deleteIfTable(trx, "assessment_results", (q) =>
        q.whereIn("session_id", trx("assessment_sessions").where({ worker_id: id }).select("id")),
      ),
  },
  {
    purposes: ["assessment"],
    label: "trace uploads",
    run: (trx, id) =>
      deleteIfTable(trx, "trace_uploads", (q) =>
        q.whereIn("session_id", trx("assessment_sessions").where({ worker_id: id }).select("id")),
      ),
  },
  {
    purposes: ["assessment"],
    label: "assessment sessions",
    run: (trx, id) => deleteIfTable(trx, "assessment_sessions", (q) => q.where({ worker_id: id })),
  },
  // Forecasts are computed from the baseline: identifiable, so they go with the assessment data.
  {
    purposes: ["assessment", "planning"],
    label: "forecasts",
    run: (trx, id) => eraseForecasts(trx, id), // also drift records and review flags
  },
  // Plans drop the worker: future scheduled sessions cancelled, planned courses removed.
  {
    purposes: ["assessment", "planning"],
    label: "plan entries",
    run: (trx, id) => erasePlanEntries(trx, id),
  },
];

export interface WithdrawalResult {
  purpose: ConsentPurpose;
  erased: Record<string, number>;
  at: string;
}

/**
 * Withdraws consent for one purpose, at once and in one transaction: erases what the purpose covered
 * (ERASURE_STEPS), replaces the purpose's consent history by a single withdrawal record (when, and
 * who recorded it), and moves the worker to the `withdrawn` stage when assessment consent goes.
 */
export async function withdrawConsent(input: {
  workerId: number;
  purpose: ConsentPurpose;
  recordedBy: number | null;
}): Promise<WithdrawalResult> {
  return db().transaction(async (trx) => {
    const last = await trx("consent_records")
      .where({ worker_id: input.workerId, purpose: input.purpose })
      .orderBy("id", "desc")
      .first();
    if (!last || last.status !== "given")
      throw new ConsentInputError(`There is no given ${input.purpose} consent to withdraw.`, "purpose");
    const at = new Date().toISOString();
    const erased: Record<string, number> = {};
    for (const step of ERASURE_STEPS) {
      if (step.purposes.includes(input.purpose))
        erased[step.label] = (erased[step.label] ?? 0) + (await step.run(trx, input.workerId));
    }
    await trx("consent_records").where({ worker_id: input.workerId, purpose: input.purpose }).del();
    await trx("consent_records").insert({
      worker_id: input.workerId,
      purpose: input.purpose,
      text_version_id: last.text_version_id,
      status: "withdrawn",
      given_at: null,
      withdrawn_at: at,
      witness_user_id: null,
      recorded_by: input.recordedBy,
      created_at: at,
    });
    if (input.purpose === "assessment") await setStage(trx, input.workerId, "withdrawn", input.recordedBy, at);
    return { purpose: input.purpose, erased, at };
  });
}

import { nowInstant, todayIn } from "~/dates";
import { type Db, db } from "~/db.server";
import { CONSENT_PURPOSES, type ConsentPurpose } from "~/domain/consent-purposes";
import type { Stage } from "~/domain/stages";
import { conflict, UserError } from "~/errors";

// Consent per purpose (docs/consent-and-disclosure.md): recorded against the text version in force,
// witnessed by an assessor or given by the worker, with history. This module is the only one that reads
// or writes consent records; the latest record per worker and purpose decides (latestRecords below).
// Withdrawal with its erasure is orchestrated in withdrawal.server.ts on top of these functions.

export { CONSENT_PURPOSES, type ConsentPurpose };

/**
 * The data layer's consent gate: the worker has not given (or has withdrawn) the consent an action needs.
 * A UserError (409: the stored consent forbids it), answered like any other.
 */
export class ConsentRequiredError extends UserError {
  constructor(
    readonly workerId: number,
    readonly purpose: ConsentPurpose,
  ) {
    super(`This worker has not given ${purpose} consent (or has withdrawn it); nothing was recorded.`, {
      status: 409,
    });
    this.name = "ConsentRequiredError";
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

const today = () => todayIn("UTC");

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
    if (!out[r.purpose])
      out[r.purpose] = {
        id: r.id,
        version: r.version,
        body: r.body,
        effectiveFrom: r.effective_from,
      };
  return out;
}
export async function currentConsentTexts(k: Db = db()) {
  return currentTexts(k);
}

interface LatestRecord {
  id: number;
  worker_id: number;
  purpose: ConsentPurpose;
  status: "given" | "withdrawn";
  given_at: unknown;
  withdrawn_at: unknown;
  text_version_id: number;
  version: string;
}

/**
 * The rule, written once: the latest record (highest id) per worker and purpose decides. Keyed
 * `${workerId}:${purpose}`; `workerIds` null = every worker with a record.
 */
async function latestRecords(
  k: Db,
  workerIds: number[] | null,
  purpose?: ConsentPurpose,
): Promise<Map<string, LatestRecord>> {
  const out = new Map<string, LatestRecord>();
  const chunks: (number[] | null)[] = workerIds === null ? [null] : [];
  for (let i = 0; workerIds !== null && i < workerIds.length; i += 500) chunks.push(workerIds.slice(i, i + 500));
  for (const chunk of chunks) {
    const q = k("consent_records as c")
      .join("consent_text_versions as t", "t.id", "c.text_version_id")
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
    if (chunk) q.whereIn("c.worker_id", chunk);
    if (purpose) q.where("c.purpose", purpose);
    for (const r of (await q) as LatestRecord[]) {
      const key = `${r.worker_id}:${r.purpose}`;
      if (!out.has(key)) out.set(key, r);
    }
  }
  return out;
}

/** The consent in force per worker for one purpose; `workerIds` null = every worker with a record. */
export async function latestConsent(
  k: Db,
  workerIds: number[] | null,
  purpose: ConsentPurpose,
): Promise<Map<number, "given" | "withdrawn">> {
  const out = new Map<number, "given" | "withdrawn">();
  if (workerIds !== null && workerIds.length === 0) return out;
  for (const r of (await latestRecords(k, workerIds, purpose)).values()) out.set(r.worker_id, r.status);
  return out;
}

/** The latest record of one worker for one purpose (undefined when there is none). */
export async function latestConsentRecord(
  workerId: number,
  purpose: ConsentPurpose,
  k: Db = db(),
): Promise<LatestRecord | undefined> {
  return (await latestRecords(k, [workerId], purpose)).get(`${workerId}:${purpose}`);
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
  for (const r of (await latestRecords(k, workerIds)).values()) {
    const p = r.purpose;
    const cur = current[p];
    out.get(r.worker_id)![p] = {
      status: r.status,
      version: r.version,
      currentVersion: cur?.version ?? null,
      needsRenewal: r.status === "given" && cur != null && cur.id !== r.text_version_id,
      at: String(r.status === "given" ? r.given_at : r.withdrawn_at),
    };
  }
  return out;
}

export async function consentState(workerId: number, k: Db = db()): Promise<ConsentState> {
  return (await consentStates([workerId], k)).get(workerId)!;
}

/** True when the worker's latest record for the purpose is a given consent. */
export async function hasConsent(workerId: number, purpose: ConsentPurpose, k: Db = db()): Promise<boolean> {
  return (await latestConsentRecord(workerId, purpose, k))?.status === "given";
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

/** Every consent record of one worker, oldest first, for the worker's data export. */
export async function consentRecordsForExport(workerId: number, k: Db = db()) {
  return k("consent_records as c")
    .join("consent_text_versions as t", "t.id", "c.text_version_id")
    .leftJoin("users as wi", "wi.id", "c.witness_user_id")
    .leftJoin("users as rb", "rb.id", "c.recorded_by")
    .where("c.worker_id", workerId)
    .orderBy("c.id")
    .select(
      "c.purpose",
      "c.status",
      "t.version",
      "c.given_at",
      "c.withdrawn_at",
      "wi.display_name as witness",
      "rb.display_name as recorded_by",
    );
}

/** Records a readiness stage change with actor and time. No-op when the stage is unchanged. */
export async function setStage(
  trx: Db,
  workerId: number,
  to: Stage,
  actorUserId: number | null,
  at = nowInstant(),
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
 * Records given consent for each purpose against the text version in force today, in one transaction
 * (the caller's, when `k` is a transaction). Witnessed by an assessor (`witnessUserId`), or given by the
 * worker in the portal (`selfGiven`: no witness, and giving again on the same text is refused). Recording
 * again for a purpose already given (e.g. after a new text version) adds a renewal row. Assessment consent
 * moves an invited or withdrawn worker to `consented`.
 */
export async function recordConsent(
  input: { workerId: number; purposes: ConsentPurpose[]; recordedBy: number } & (
    | { witnessUserId: number; selfGiven?: false }
    | { witnessUserId?: null; selfGiven: true }
  ),
  k?: Db,
): Promise<void> {
  const field = input.selfGiven ? "purpose" : "purposes";
  if (input.purposes.length === 0) throw new UserError("Choose at least one purpose.", { field });
  const run = async (trx: Db) => {
    if (!input.selfGiven && !(await isAssessor(trx, input.witnessUserId)))
      throw new UserError("The witness must be an active assessor.", { field: "witnessUserId" });
    const texts = await currentTexts(trx);
    const at = nowInstant();
    for (const purpose of input.purposes) {
      const text = texts[purpose];
      if (!text)
        throw new UserError(
          input.selfGiven
            ? `There is no ${purpose} consent text in force yet; nothing was recorded.`
            : `There is no ${purpose} consent text in force; an admin must add one first.`,
          { field },
        );
      if (input.selfGiven) {
        const last = await latestConsentRecord(input.workerId, purpose, trx);
        if (last?.status === "given" && last.text_version_id === text.id)
          throw conflict(`You have already given ${purpose} consent on the current text (v${text.version}).`, field);
      }
      await trx("consent_records").insert({
        worker_id: input.workerId,
        purpose,
        text_version_id: text.id,
        status: "given",
        given_at: at,
        witness_user_id: input.selfGiven ? null : input.witnessUserId,
        recorded_by: input.recordedBy,
        created_at: at,
      });
    }
    const w = await trx("workers").where({ id: input.workerId }).first("stage");
    if (input.purposes.includes("assessment") && w && (w.stage === "invited" || w.stage === "withdrawn")) {
      await setStage(trx, input.workerId, "consented", input.recordedBy, at);
    }
  };
  await (k ? run(k) : db().transaction(run));
}

/**
 * Replaces a purpose's consent history by a single withdrawal record (when, and who recorded it), inside
 * the withdrawal's transaction. Returns false when the latest record is not a given consent.
 */
export async function replaceWithWithdrawal(
  trx: Db,
  input: { workerId: number; purpose: ConsentPurpose; recordedBy: number | null; at: string },
): Promise<boolean> {
  const last = await latestConsentRecord(input.workerId, input.purpose, trx);
  if (last?.status !== "given") return false;
  await trx("consent_records").where({ worker_id: input.workerId, purpose: input.purpose }).del();
  await trx("consent_records").insert({
    worker_id: input.workerId,
    purpose: input.purpose,
    text_version_id: last.text_version_id,
    status: "withdrawn",
    given_at: null,
    withdrawn_at: input.at,
    witness_user_id: null,
    recorded_by: input.recordedBy,
    created_at: input.at,
  });
  return true;
}

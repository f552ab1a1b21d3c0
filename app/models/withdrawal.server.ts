import type { Knex } from "knex";
import { nowDate, nowInstant } from "~/dates";
import { type Db, db } from "~/db.server";
import type { ConsentPurpose } from "~/domain/consent-purposes";
import { conflict } from "~/errors";
import { latestConsentRecord, replaceWithWithdrawal, setStage } from "./consent.server";
import { eraseForecasts } from "./forecast.server";
import { workerWallClockAt } from "./sites.server";

// Withdrawal of consent is the ONE place where a worker's identifiable data are erased
// (docs/consent-and-disclosure.md). Each step deletes rows (never flags them) inside the withdrawal's
// transaction; an area that stores identifiable data adds its step to ERASURE_STEPS so one call erases all.
export interface ErasureStep {
  /** Which withdrawn purpose triggers this step. */
  purposes: ConsentPurpose[];
  /** What it erases, as counted in the result. */
  label: string;
  run: (trx: Knex.Transaction, workerId: number) => Promise<number>;
}

/**
 * Takes the worker out of the plans inside a transaction: future scheduled sessions cancelled, courses that
 * were only planned dropped, a forecast/planned/training stage set back to baselined (a course in training keeps
 * its hours for a later return). Runs as an ERASURE_STEPS
 * step, inside the withdrawal's transaction. Returns sessions cancelled.
 */
export async function erasePlanEntries(
  trx: Db,
  workerId: number,
  userId: number | null = null,
  now = nowDate(),
): Promise<number> {
  const at = now.toISOString();
  const n = Number(
    await trx("training_sessions")
      .where({ worker_id: workerId, status: "scheduled" })
      // Session times are wall-clock times of the worker's site: "from now" on that clock.
      .where("scheduled_start", ">=", await workerWallClockAt(workerId, now, trx))
      .update({
        status: "cancelled",
        notes: "Cancelled: the worker withdrew consent.",
        logged_by: userId,
        logged_at: at,
      }),
  );
  await trx("device_courses").where({ worker_id: workerId, status: "planned" }).del();
  const w = await trx("workers").where({ id: workerId }).first("stage");
  // A worker in training leaves it too: nothing can plan them any more, so "Training" would never end.
  if (w && (w.stage === "planned" || w.stage === "forecast" || w.stage === "training"))
    await setStage(trx, workerId, "baselined", userId, at);
  return n;
}

const deleted = async (q: Knex.QueryBuilder) => Number(await q.del());

export const ERASURE_STEPS: ErasureStep[] = [
  {
    purposes: ["assessment"],
    label: "assessment results",
    run: (trx, id) =>
      deleted(
        trx("assessment_results").whereIn(
          "session_id",
          trx("assessment_sessions").where({ worker_id: id }).select("id"),
        ),
      ),
  },
  {
    purposes: ["assessment"],
    label: "trace uploads",
    run: (trx, id) =>
      deleted(
        trx("trace_uploads").whereIn("session_id", trx("assessment_sessions").where({ worker_id: id }).select("id")),
      ),
  },
  {
    purposes: ["assessment"],
    label: "assessment sessions",
    run: (trx, id) => deleted(trx("assessment_sessions").where({ worker_id: id })),
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
    const last = await latestConsentRecord(input.workerId, input.purpose, trx);
    if (last?.status !== "given") throw conflict(`There is no given ${input.purpose} consent to withdraw.`, "purpose");
    const at = nowInstant();
    const erased: Record<string, number> = {};
    for (const step of ERASURE_STEPS) {
      if (step.purposes.includes(input.purpose))
        erased[step.label] = (erased[step.label] ?? 0) + (await step.run(trx, input.workerId));
    }
    await replaceWithWithdrawal(trx, {
      workerId: input.workerId,
      purpose: input.purpose,
      recordedBy: input.recordedBy,
      at,
    });
    if (input.purpose === "assessment") await setStage(trx, input.workerId, "withdrawn", input.recordedBy, at);
    return { purpose: input.purpose, erased, at };
  });
}

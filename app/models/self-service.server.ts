import type { Principal } from "~/auth/guard.server";
import { appUrl } from "~/config.server";
import { type Instant, nowDate, todayIn } from "~/dates";
import { type Db, db } from "~/db.server";
import { sendMail } from "~/mail.server";
import { roleEmailsCovering } from "./adverse-events.server";
import {
  type ConsentPurpose,
  consentHistory,
  consentState,
  currentConsentTexts,
  recordConsent,
} from "./consent.server";
import { refreshForecastsForWorker } from "./forecast.server";
import { type ProgressView, progressView } from "./progress.server";
import { scheduleSessions } from "./schedule.server";
import { workerTimeZone } from "./sites.server";
import { type WithdrawalResult, withdrawConsent } from "./withdrawal.server";

// The worker's own portal. Every function takes the worker id that the route read from the
// signed-in session (AppUser.workerId), never one from the URL, and reads only rows of that worker.

/** The worker's own row with the names of their site and department (undefined when there is no such worker). */
export function workerWithSite(workerId: number, k: Db = db()) {
  return k("workers as w")
    .join("sites as s", "s.id", "w.site_id")
    .join("departments as d", "d.id", "w.department_id")
    .where("w.id", workerId)
    .first(
      "w.id",
      "w.employee_number",
      "w.given_name",
      "w.family_name",
      "w.email",
      "w.stage",
      "w.site_id",
      "w.department_id",
      "w.created_at",
      "w.updated_at",
      "s.name as site",
      "d.name as department",
    );
}

export async function ownWorker(workerId: number, k: Db = db()) {
  const w = await workerWithSite(workerId, k);
  if (!w) return null;
  return {
    id: w.id as number,
    employeeNumber: w.employee_number as string,
    givenName: w.given_name as string,
    name: `${w.given_name} ${w.family_name}`,
    email: (w.email as string) ?? null,
    stage: w.stage as string,
    siteId: w.site_id as number,
    departmentId: w.department_id as number,
    site: w.site as string,
    department: w.department as string,
  };
}

export interface MySession {
  id: number;
  /** Wall-clock times of the worker's site ("2026-12-07T09:00:00"), in `timeZone`. */
  start: string;
  end: string | null;
  timeZone: string;
  deviceType: string;
  deviceTypeId: number;
  unit: string | null;
  place: string;
  trainer: string | null;
  status: string;
}

/** My upcoming sessions from the instant `from` (default now) on the site's clock, read from the schedule. */
export async function mySessions(
  workerId: number,
  opts: { from?: Instant | Date; limit?: number } = {},
  k: Db = db(),
): Promise<MySession[]> {
  const rows = await scheduleSessions({ workerId, from: opts.from ?? nowDate(), limit: opts.limit }, k);
  return rows.map((r) => ({
    id: r.id,
    start: r.start,
    end: r.end,
    timeZone: r.timeZone,
    deviceType: r.deviceType,
    deviceTypeId: r.deviceTypeId,
    unit: r.unit,
    place: r.place,
    trainer: r.trainer,
    status: r.status,
  }));
}

/** A principal limited to reading this one worker through shared views (the worker's own id only). */
function selfPrincipal(p: Principal, departmentId: number): Principal {
  return { ...p, scope: { allSites: false, siteIds: [], departmentIds: [departmentId] } } as Principal;
}

export interface MyForecast {
  deviceTypeId: number;
  deviceType: string;
  medianHours: number;
  lowerHours: number;
  upperHours: number;
  intervalLevel: number;
  hoursDone: number;
  remainingHours: number | null;
  remainingLower: number | null;
  remainingUpper: number | null;
  status: string | null;
  courseStatus: string | null;
  pauseReason: string | null;
  modelVersion: number;
}

export async function myForecasts(workerId: number, k: Db = db()): Promise<MyForecast[]> {
  const rows = await k("forecasts as f")
    .join("device_types as d", "d.id", "f.device_type_id")
    .join("model_versions as v", "v.id", "f.model_version_id")
    .leftJoin("device_courses as c", function () {
      this.on("c.worker_id", "f.worker_id").andOn("c.device_type_id", "f.device_type_id");
    })
    .where("f.worker_id", workerId)
    .select("f.*", "d.name as device_name", "v.version_number", "c.status as course_status", "c.pause_reason")
    .orderBy("d.id");
  return rows.map((r) => ({
    deviceTypeId: r.device_type_id,
    deviceType: r.device_name,
    medianHours: Number(r.median_hours),
    lowerHours: Number(r.lower_hours),
    upperHours: Number(r.upper_hours),
    intervalLevel: Number(r.interval_level),
    hoursDone: Number(r.hours_done),
    remainingHours: r.remaining_hours == null ? null : Number(r.remaining_hours),
    remainingLower: r.remaining_lower == null ? null : Number(r.remaining_lower),
    remainingUpper: r.remaining_upper == null ? null : Number(r.remaining_upper),
    status: r.progress_status ?? null,
    courseStatus: r.course_status ?? null,
    pauseReason: r.pause_reason ?? null,
    modelVersion: r.version_number,
  }));
}

/** Everything the worker's home shows: next sessions, stage, forecasts in plain words, progress per course. */
export async function workerHome(p: Principal, workerId: number, now = nowDate()) {
  const me = await ownWorker(workerId);
  if (!me) return null;
  const next = await mySessions(workerId, { from: now, limit: 8 });
  const attended = await db()("training_sessions")
    .where({ worker_id: workerId, status: "attended" })
    .count<{ n: number }[]>({ n: "*" });
  const courses = await db()("device_courses as c")
    .join("device_types as d", "d.id", "c.device_type_id")
    .where("c.worker_id", workerId)
    .whereIn("c.status", ["training", "paused", "proficient"])
    .select("c.device_type_id", "c.status", "c.pause_reason", "d.name")
    .orderBy("d.id");
  const self = selfPrincipal(p, me.departmentId);
  const progress: ProgressView[] = [];
  for (const c of courses) {
    const v = await progressView(self, workerId, c.device_type_id);
    if (v && v.worker.id === workerId) progress.push(v);
  }
  return {
    me,
    next,
    firstSessionAhead: Number(attended[0]?.n ?? 0) === 0,
    forecasts: await myForecasts(workerId),
    progress,
    paused: courses
      .filter((c) => c.status === "paused")
      .map((c) => ({ deviceType: c.name as string, reason: (c.pause_reason as string) ?? null })),
  };
}

// ── Consent ─────────────────────────────────────────────────────────────────────────────────────

export async function myConsent(workerId: number) {
  const [texts, state, history] = await Promise.all([
    currentConsentTexts(),
    consentState(workerId),
    consentHistory(workerId),
  ]);
  return { texts, state, history };
}

/**
 * The worker gives consent for one purpose against the text in force, in one transaction. Self-given
 * consent has no witness; recorded_by is the worker's own user. Planning consent computes forecasts at once
 * when a model is approved.
 */
export async function giveOwnConsent(workerId: number, purpose: ConsentPurpose, userId: number): Promise<void> {
  await db().transaction(async (trx) => {
    await recordConsent({ workerId, purposes: [purpose], recordedBy: userId, selfGiven: true }, trx);
    if (purpose === "planning") await refreshForecastsForWorker(trx, workerId, userId);
  });
}

export interface OwnWithdrawal extends WithdrawalResult {
  sessionsCancelled: number;
  coordinatorsNotified: string[];
}

/**
 * Withdrawal by the worker: the SAME withdrawConsent() an assessor's recording uses (erasure in its own
 * transaction), then — for planning or assessment — the worker leaves the plans (future scheduled sessions
 * cancelled, planned courses dropped) and the coordinators of the worker's site are e-mailed.
 *
 * Plan removal is an ERASURE_STEPS step of withdrawal.server.ts, so it happens inside the withdrawal's own
 * transaction (for assessor-recorded withdrawals too).
 */
export async function withdrawOwnConsent(
  workerId: number,
  purpose: ConsentPurpose,
  userId: number,
): Promise<OwnWithdrawal> {
  const result = await withdrawConsent({ workerId, purpose, recordedBy: userId });
  let sessionsCancelled = 0;
  let coordinatorsNotified: string[] = [];
  if (purpose === "planning" || purpose === "assessment") {
    sessionsCancelled = result.erased["plan entries"] ?? 0;
    coordinatorsNotified = await notifyCoordinatorsOfWithdrawal(workerId, purpose, sessionsCancelled);
  }
  return { ...result, sessionsCancelled, coordinatorsNotified };
}

/** E-mails the coordinators whose scope covers the worker that the worker left the plans. Returns the addresses. */
export async function notifyCoordinatorsOfWithdrawal(
  workerId: number,
  purpose: ConsentPurpose,
  cancelled: number,
): Promise<string[]> {
  const w = await db()("workers as w")
    .join("sites as s", "s.id", "w.site_id")
    .where("w.id", workerId)
    .first("w.employee_number", "w.given_name", "w.family_name", "w.site_id", "w.department_id", "s.name as site");
  if (!w) return [];
  const to = await roleEmailsCovering(db(), "coordinator", w.site_id, w.department_id);
  if (to.length === 0) return to;
  await sendMail({
    to,
    subject: `Consent withdrawn: ${w.employee_number} leaves training plans`,
    text: [
      `${w.given_name} ${w.family_name} (${w.employee_number}, ${w.site}) withdrew ${purpose} consent in Limberly on ${todayIn(await workerTimeZone(workerId))}.`,
      "",
      `Their forecasts are erased and they are no longer in any plan. ${cancelled} future scheduled session${cancelled === 1 ? " was" : "s were"} cancelled; the device and trainer time is free again.`,
      "Do not plan this worker until they give consent again.",
      "",
      `Plans and fleet: ${appUrl}/coordinate`,
    ].join("\n"),
  });
  return to;
}

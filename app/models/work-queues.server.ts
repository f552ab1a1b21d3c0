import type { Principal } from "~/auth/guard.server";
import { addDays, dayAndWeekIn, dayOf, type Instant, nowDate, todayIn, wallClockNow } from "~/dates";
import { type Db, db } from "~/db.server";
import { subjectsOwnedBy } from "~/domain/review-owners";
import { scheduleSessions } from "./schedule.server";
import { viewerTimeZone } from "./sites.server";
import { whereWorkerInScope } from "./workers.server";

// What waits for each role, as counts with a link to where the work is done. Each count is one small
// query over the principal's scope; nothing here returns a person's data, only how many.

export interface QueueItem {
  key: string;
  label: string;
  count: number;
  to: string;
  /** What to do about it, in a few words. */
  hint: string;
}

/** A baseline older than this is due for a retest before it drives new plans (our default; not a published figure). */
export const BASELINE_RETEST_DAYS = 365;
/** "Back from a pause" stays on the coordinator's list this long after the course resumed. */
const BACK_FROM_PAUSE_DAYS = 14;

/** The number from a one-row `count({ n })` result (a number on SQLite, possibly text on PostgreSQL). */
const n = (rows: { n?: number | string }[]) => Number(rows[0]?.n ?? 0);

export async function assessorQueue(p: Principal, now: Instant | Date = nowDate(), k: Db = db()): Promise<QueueItem[]> {
  const me = p.kind === "user" ? p.user.id : -1;
  const drafts = await k("model_versions")
    .where("status", "draft")
    .where((w) => {
      w.whereNull("fitted_by").orWhereNot("fitted_by", me);
    })
    .count({ n: "*" });
  const questions = openQuestions(p, k);
  const flags = whereWorkerInScope(
    k("review_flags as f").join("workers", "workers.id", "f.worker_id").whereNull("f.resolved_at").count({ n: "*" }),
    p.scope,
  );
  const paused = whereWorkerInScope(k("workers").where("workers.stage", "paused").count({ n: "*" }), p.scope);
  const cutoff = addDays(todayIn(await viewerTimeZone(p, k), now), -BASELINE_RETEST_DAYS);
  const lastBaseline = k("assessment_sessions").select("worker_id").max({ last: "assessed_on" }).groupBy("worker_id");
  const dueForRetest = whereWorkerInScope(
    k
      .from(lastBaseline.as("b"))
      .join("workers", "workers.id", "b.worker_id")
      .whereNotIn("workers.stage", ["proficient", "withdrawn"])
      .where("b.last", "<", cutoff)
      .count({ n: "*" }),
    p.scope,
  );
  const [d, q, f, pa, due] = await Promise.all([drafts, questions, flags, paused, dueForRetest]);
  return [
    {
      key: "second-approval",
      label: "Forecast models waiting for a second assessor",
      count: n(d),
      to: "/models",
      hint: "Review and approve, or leave as draft.",
    },
    {
      key: "questions",
      label: "Questions from workers about their figures",
      count: n(q),
      to: "/assess/reviews",
      hint: "Answer each one; the worker gets an e-mail.",
    },
    {
      key: "flags",
      label: "Courses flagged for review (plateau or past forecast)",
      count: n(f),
      to: "/forecast",
      hint: "Look at the progress and decide with the trainer.",
    },
    {
      key: "paused",
      label: "Paused courses to review",
      count: n(pa),
      to: "/assess/workers?stage=paused",
      hint: "A severe event paused these; review before anyone trains again.",
    },
    {
      key: "retest",
      label: `Baselines older than ${BASELINE_RETEST_DAYS} days, not yet proficient`,
      count: n(due),
      to: "/assess/workers",
      hint: "Plan a retest before relying on the forecast.",
    },
  ];
}

/** Open review requests this principal owns (domain/review-owners.ts), in scope. */
function openQuestions(p: Principal, k: Db) {
  return whereWorkerInScope(
    k("review_requests as r")
      .join("workers", "workers.id", "r.worker_id")
      .where("r.status", "open")
      .whereIn("r.subject", subjectsOwnedBy(p.roles))
      .count({ n: "*" }),
    p.scope,
  );
}

export async function coordinatorQueue(
  p: Principal,
  now: Instant | Date = nowDate(),
  k: Db = db(),
): Promise<QueueItem[]> {
  const latestPublished = await k("allocation_runs").whereNotNull("published_at").max({ at: "created_at" }).first();
  const toPublish = k("allocation_runs").where("status", "done").whereNull("published_at");
  if (latestPublished?.at) toPublish.where("created_at", ">", latestPublished.at);
  const since = new Date(new Date(now).getTime() - BACK_FROM_PAUSE_DAYS * 86_400_000).toISOString();
  const back = whereWorkerInScope(
    k("stage_changes as c")
      .join("workers", "workers.id", "c.worker_id")
      .where("c.from_stage", "paused")
      .whereNot("c.to_stage", "withdrawn")
      .where("c.at", ">=", since)
      .countDistinct({ n: "c.worker_id" }),
    p.scope,
  );
  const [runs, backRows, affected, questions] = await Promise.all([
    toPublish.count({ n: "*" }),
    back,
    sessionsHitByAbsence(p, now, k),
    openQuestions(p, k),
  ]);
  return [
    {
      key: "to-publish",
      label: "Finished plans not yet published",
      count: n(runs),
      to: "/coordinate/runs",
      hint: "Check the result and publish, or start a new run.",
    },
    {
      key: "back-from-pause",
      label: `Workers back from a pause in the last ${BACK_FROM_PAUSE_DAYS} days`,
      count: n(backRows),
      to: "/coordinate/trainees",
      hint: "They are in the next run's pool; check their conditions.",
    },
    {
      key: "affected",
      label: "Published sessions hit by leave or device maintenance",
      count: affected,
      to: "/coordinate/runs",
      hint: "Re-plan: these sessions cannot take place as published.",
    },
    {
      key: "questions",
      label: "Questions from workers about their plan",
      count: n(questions),
      to: "/coordinate/reviews",
      hint: "Answer each one; the worker gets an e-mail.",
    },
  ];
}

/** Upcoming published sessions whose worker or trainer is on leave, or whose device unit is in maintenance, that day. */
async function sessionsHitByAbsence(p: Principal, now: Instant | Date, k: Db): Promise<number> {
  // Upcoming sessions from the one schedule reader; those a published run wrote (sessions carried from
  // before the first run have no run).
  const sessions = (await scheduleSessions({ scope: p.scope, from: now }, k)).filter((s) => s.runId !== null);
  if (sessions.length === 0) return 0;
  const fromDay = dayOf(sessions[0].start); // sessions come in start order
  const [workerLeave, trainerLeave, maintenance] = await Promise.all([
    k("worker_leave").where("ends_on", ">=", fromDay).select("worker_id as id", "starts_on", "ends_on"),
    k("trainer_leave").where("ends_on", ">=", fromDay).select("trainer_id as id", "starts_on", "ends_on"),
    k("unit_maintenance_windows")
      .where("ends_on", ">=", fromDay)
      .select("device_unit_id as id", "starts_on", "ends_on"),
  ]);
  const byId = (rows: { id: number; starts_on: string; ends_on: string }[]) => {
    const m = new Map<number, { starts_on: string; ends_on: string }[]>();
    for (const r of rows) m.set(r.id, [...(m.get(r.id) ?? []), r]);
    return m;
  };
  const [wl, tl, mw] = [byId(workerLeave), byId(trainerLeave), byId(maintenance)];
  const hit = (m: Map<number, { starts_on: string; ends_on: string }[]>, id: number | null, day: string) =>
    id !== null && (m.get(id) ?? []).some((r) => r.starts_on <= day && day <= r.ends_on);
  return sessions.filter((s) => {
    const day = dayOf(s.start);
    return hit(wl, s.workerId, day) || hit(tl, s.trainerId, day) || hit(mw, s.deviceUnitId, day);
  }).length;
}

export async function trainerQueue(
  trainerId: number,
  now: Instant | Date = nowDate(),
  k: Db = db(),
): Promise<QueueItem[]> {
  const site = await k("trainers as t")
    .join("sites as s", "s.id", "t.site_id")
    .where("t.id", trainerId)
    .first("s.time_zone");
  const zone: string = site?.time_zone ?? "UTC";
  const day = dayAndWeekIn(zone, now);
  const nowWall = wallClockNow(zone, now);
  const mine = () => k("training_sessions").where({ trainer_id: trainerId, status: "scheduled" });
  const [today, overdue] = await Promise.all([
    mine().where("scheduled_start", ">=", day.dayStart).where("scheduled_start", "<", nowWall).count({ n: "*" }),
    mine().where("scheduled_start", "<", day.dayStart).count({ n: "*" }),
  ]);
  return [
    {
      key: "to-log",
      label: "Sessions today waiting for their log",
      count: n(today),
      to: "/train",
      hint: "Log attendance, hours and score, or mark a no-show.",
    },
    {
      key: "overdue",
      label: "Overdue logs from earlier days",
      count: n(overdue),
      to: "/train#waiting-h",
      hint: "Log them so forecasts and plans stay right.",
    },
  ];
}

/** `me`: the signed-in admin, whose own requests wait for someone else and are not counted. */
export async function adminQueue(me: number | null, k: Db = db()): Promise<QueueItem[]> {
  const approvals = await k("privilege_requests")
    .where("status", "pending")
    .where((w) => {
      w.whereNull("requested_by").orWhereNot("requested_by", me ?? -1);
    })
    .where((w) => {
      w.whereNull("target_user_id").orWhereNot("target_user_id", me ?? -1);
    })
    .count({ n: "*" });
  // Consent given on a text version older than the newest one of its purpose: the worker may be asked to renew.
  const newest = k("consent_text_versions").select("purpose").max({ id: "id" }).groupBy("purpose");
  const latestRecord = k("consent_records")
    .select("worker_id", "purpose")
    .max({ id: "id" })
    .groupBy("worker_id", "purpose");
  const outdated = await k
    .from(latestRecord.as("l"))
    .join("consent_records as c", "c.id", "l.id")
    .join(newest.as("v"), "v.purpose", "c.purpose")
    .where("c.status", "given")
    .whereRaw("c.text_version_id < v.id")
    .count({ n: "*" });
  const noRole = await k("users")
    .where("active", true)
    .whereNotExists(k("role_assignments as a").select(k.raw("1")).whereRaw("a.user_id = users.id"))
    .count({ n: "*" });
  return [
    {
      key: "approvals",
      label: "Role grants and API keys waiting for your approval",
      count: n(approvals),
      to: "/admin/approvals",
      hint: "A second admin approves clinical roles and keys; you cannot approve your own.",
    },
    {
      key: "consent-renewal",
      label: "Consents given on an older consent text",
      count: n(outdated),
      to: "/admin/consent-texts",
      hint: "A newer text is in force; these people may be asked to renew.",
    },
    {
      key: "no-role",
      label: "Active users without a role",
      count: n(noRole),
      to: "/admin/users",
      hint: "Give each a role or deactivate them.",
    },
  ];
}

import type { Principal } from "~/auth/guard.server";
import type { NotReady, Placement } from "~/compute/placement";
import { placeRun } from "~/compute/replan";
import type { PackedSession, UnplacedHours } from "~/compute/session-packing";
import { sessionRuleViolations } from "~/compute/session-rules";
import { DEFAULT_TIME_ZONE, dayOf, hhmmOfWallClock, nowInstant, startOfDay, wallClock, wallClockAt } from "~/dates";
import { type Db, db, type TableInsert } from "~/db.server";
import { conflict, UserError } from "~/errors";
import { sendMail } from "~/mail.server";
import type { RunDetail } from "./allocation-runs.server";
import { getRun } from "./allocation-runs.server";
import { type CalendarSession, icsFile } from "./calendar.server";
import { sessionRulesNow } from "./site-calendar.server";
import { workerTimeZones } from "./sites.server";

// Publishing a plan: a coordinator's decision. The run's weekly hours become dated sessions
// (app/compute/session-packing.ts); every scheduled session of the previously published plan is replaced in
// ONE transaction, guarded by the published-plan version (optimistic check: of two coordinators publishing
// from the same version, the second is refused and told who won). After the commit, e-mail with an .ics file
// goes to each worker and trainer whose sessions changed — and only to them. publishPreview counts, before the
// coordinator confirms, the people ready after placement and the people who will be e-mailed, with the same
// functions publishRun uses.

/** Of two publishes from the same plan version, the second is told who won (409). */
function publishConflict(current: PlanState): UserError {
  return conflict(
    `Someone else published first: the plan is now at version ${current.version}${current.runId ? ` (run #${current.runId}` : ""}${current.by ? ` by ${current.by}` : ""}${current.at ? ` at ${current.at.slice(0, 16).replace("T", " ")}` : ""}${current.runId ? ")" : ""}. Nothing of yours was published; look at the current plan and publish again if you still want this run.`,
  );
}

export interface PlanState {
  version: number;
  runId: number | null;
  by: string | null;
  at: string | null;
}

/** The published plan's version and who published which run when, read in `k` (a transaction, or not). */
async function readPlanState(k: Db): Promise<PlanState> {
  const r = await k("published_plan_state as s")
    .leftJoin("users as u", "u.id", "s.published_by")
    .where("s.id", 1)
    .first("s.version", "s.current_run_id", "s.published_at", "u.display_name");
  return {
    version: Number(r?.version ?? 0),
    runId: r?.current_run_id ?? null,
    by: r?.display_name ?? null,
    at: r?.published_at ? String(r.published_at) : null,
  };
}

export async function planState(): Promise<PlanState> {
  await db()("published_plan_state").insert({ id: 1, version: 0 }).onConflict("id").ignore();
  return readPlanState(db());
}

export function publishRefusal(run: RunDetail): string | null {
  if (run.status !== "done" || !run.plan || !run.snapshot) return "Only a finished run can be published.";
  if (run.plan.status === "infeasible") return "This run has no feasible plan to publish.";
  if (run.parameters.whatIf.addUnits.length > 0)
    return "This what-if run adds device units that do not exist yet, so it cannot be published. Add the units to the fleet and start a new run.";
  return null;
}

export type { NotReady, Placement };

/** What the run delivers once its hours are placed on the calendar (app/compute/placement.ts). */
export function placement(run: RunDetail): Placement {
  if (!run.snapshot || !run.plan)
    return { sessions: [], unplaced: [], readyIds: [], notReady: [], continuing: { total: 0, finishing: 0 } };
  return placeRun(run.snapshot.calendar, run.snapshot.commitments ?? [], run.plan, run.snapshot.replan);
}

export interface PublishOutcome {
  version: number;
  sessions: number;
  unplaced: UnplacedHours[];
  notified: { email: string; kind: "worker" | "trainer"; change: "new" | "changed" | "cancelled" }[];
  unchanged: number;
  mailFailures: string[];
}

interface OldSession {
  worker_id: number;
  trainer_id: number | null;
  device_type_id: number;
  device_unit_id: number | null;
  scheduled_start: string;
  scheduled_end: string;
}

interface NewSession extends OldSession {
  trainer_id: number;
}

/** The rows publishing writes for the run (pure: the run's placement over its snapshot). */
function sessionRows(run: RunDetail, sessions: PackedSession[]): NewSession[] {
  const cal = run.snapshot!.calendar;
  const devices = new Map(cal.devices.map((d) => [d.id, d]));
  const trainers = new Map(cal.trainers.map((t) => [t.id, t]));
  const workers = new Map(cal.workers.map((w) => [w.id, w]));
  return sessions.map((s) => ({
    worker_id: workers.get(s.workerId)!.workerId,
    device_type_id: devices.get(s.deviceId)!.deviceTypeId,
    trainer_id: trainers.get(s.trainerId)!.trainerId,
    device_unit_id: s.unitId,
    scheduled_start: wallClockAt(s.date, s.start),
    scheduled_end: wallClockAt(s.date, s.end),
  }));
}

/**
 * The scheduled sessions a publish replaces: from the run's start date on, those of every worker the run
 * plans (its pool and the workers already in training it carries), and those an earlier run published for
 * workers of the run's sites (and departments, when the pool names them). Sessions before the start date, and
 * sessions of people the run does not plan that no run wrote, stay.
 */
function replacedSessions(k: Db, run: RunDetail) {
  const pool = run.parameters.pool;
  const planned = run.snapshot!.calendar.workers.map((w) => w.workerId);
  return k("training_sessions as ts")
    .where("ts.status", "scheduled")
    .where("ts.scheduled_start", ">=", startOfDay(run.parameters.startDate))
    .where((w) => {
      w.whereIn("ts.worker_id", planned.length ? planned : [-1]).orWhere((x) => {
        x.whereNotNull("ts.allocation_run_id").whereIn(
          "ts.worker_id",
          k("workers")
            .whereIn("site_id", pool.siteIds.length ? pool.siteIds : [-1])
            .modify((q) => {
              if (pool.departmentIds.length) q.whereIn("department_id", pool.departmentIds);
            })
            .select("id"),
        );
      });
    });
}

type Change = "new" | "changed" | "cancelled";

/** Who changed: each person's sessions before and after, compared as sets. */
function changes(old: OldSession[], rows: NewSession[]) {
  const fp = (items: string[]) => [...items].sort().join("\n");
  const add = (m: Map<number, string[]>, id: number, v: string) => {
    const list = m.get(id);
    if (list) list.push(v);
    else m.set(id, [v]);
  };
  const oldWorker = new Map<number, string[]>();
  const oldTrainer = new Map<number, string[]>();
  const newWorker = new Map<number, string[]>();
  const newTrainer = new Map<number, string[]>();
  for (const [list, w, t] of [
    [old, oldWorker, oldTrainer],
    [rows, newWorker, newTrainer],
  ] as const)
    for (const o of list) {
      const key = `${wallClock(o.scheduled_start)}|${wallClock(o.scheduled_end)}|${o.device_type_id}|${o.device_unit_id}`;
      add(w, o.worker_id, `${key}|${o.trainer_id}`);
      if (o.trainer_id != null) add(t, o.trainer_id, `${key}|${o.worker_id}`);
    }
  const diff = (before: Map<number, string[]>, after: Map<number, string[]>) => {
    const changed = new Map<number, Change>();
    let unchanged = 0;
    for (const id of [...new Set([...before.keys(), ...after.keys()])].sort((a, b) => a - b)) {
      if (fp(before.get(id) ?? []) === fp(after.get(id) ?? [])) unchanged++;
      else changed.set(id, !after.has(id) ? "cancelled" : before.has(id) ? "changed" : "new");
    }
    return { changed, unchanged };
  };
  const workers = diff(oldWorker, newWorker);
  const trainers = diff(oldTrainer, newTrainer);
  return { workers: workers.changed, trainers: trainers.changed, unchanged: workers.unchanged + trainers.unchanged };
}

async function emails(k: Db, workerIds: number[], trainerIds: number[]) {
  const w = await k("workers")
    .whereIn("id", workerIds.length ? workerIds : [-1])
    .select("id", "given_name", "family_name", "email");
  const t = await k("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .whereIn("t.id", trainerIds.length ? trainerIds : [-1])
    .select("t.id", "u.display_name", "u.email");
  return {
    workers: new Map(w.map((r) => [r.id, { name: `${r.given_name} ${r.family_name}`, email: r.email ?? null }])),
    trainers: new Map(t.map((r) => [r.id as number, { name: r.display_name as string, email: r.email ?? null }])),
  };
}

export interface PublishPreview extends Placement {
  /** people whose sessions change and who have an e-mail address: exactly the people publishing e-mails */
  recipients: { workers: number; trainers: number };
  /** people whose sessions change but who have no e-mail address on file */
  withoutEmail: number;
  unchanged: number;
  /** scheduled sessions the publish replaces */
  replaces: number;
}

/** What publishing this run would do now, counted exactly as publishRun does it. */
export async function publishPreview(run: RunDetail, k: Db = db()): Promise<PublishPreview | null> {
  if (publishRefusal(run)) return null;
  const place = placement(run);
  const rows = sessionRows(run, place.sessions);
  const old: OldSession[] = await replacedSessions(k, run).select(
    "ts.worker_id",
    "ts.trainer_id",
    "ts.device_type_id",
    "ts.device_unit_id",
    "ts.scheduled_start",
    "ts.scheduled_end",
  );
  const c = changes(old, rows);
  const who = await emails(k, [...c.workers.keys()], [...c.trainers.keys()]);
  const withEmail = (ids: Iterable<number>, m: Map<number, { email: string | null }>) =>
    [...ids].filter((id) => m.get(id)?.email).length;
  const workers = withEmail(c.workers.keys(), who.workers);
  const trainers = withEmail(c.trainers.keys(), who.trainers);
  return {
    ...place,
    recipients: { workers, trainers },
    withoutEmail: c.workers.size + c.trainers.size - workers - trainers,
    unchanged: c.unchanged,
    replaces: old.length,
  };
}

export async function publishRun(
  principal: Principal,
  runId: number,
  expectedPlanVersion: number,
): Promise<PublishOutcome> {
  const run = await getRun(principal.scope, runId);
  if (!run) throw new UserError("No such run in your scope.");
  const refusal = publishRefusal(run);
  if (refusal) throw new UserError(refusal);
  const snapshot = run.snapshot!;
  const { sessions, unplaced } = placement(run);
  // Nothing is published that breaks the session rules as they stand now (closures, working hours, session
  // lengths and breaks may have changed since the run).
  const broken = sessionRuleViolations(await sessionRulesNow(snapshot.calendar), sessions);
  if (broken.length)
    throw new UserError(
      `${broken.length} of this run's sessions break the session rules as they stand now, e.g. ${broken[0]} The closures, working hours or session rules changed after the run; start a new run. Nothing was published.`,
    );
  const devices = new Map(snapshot.calendar.devices.map((d) => [d.id, d]));
  const trainers = new Map(snapshot.calendar.trainers.map((t) => [t.id, t]));
  const workers = new Map(snapshot.calendar.workers.map((w) => [w.id, w]));
  const userId = principal.kind === "user" ? principal.user.id : null;
  const now = nowInstant();
  await planState(); // makes sure the counter row exists

  const rows = sessionRows(run, sessions);

  const { version, old } = await db().transaction(async (trx) => {
    const won = await trx("published_plan_state")
      .where({ id: 1, version: expectedPlanVersion })
      .update({ version: expectedPlanVersion + 1, current_run_id: runId, published_by: userId, published_at: now });
    if (Number(won) !== 1) {
      throw publishConflict(await readPlanState(trx));
    }
    const old: (OldSession & { id: number })[] = await replacedSessions(trx, run).select(
      "ts.id",
      "ts.worker_id",
      "ts.trainer_id",
      "ts.device_type_id",
      "ts.device_unit_id",
      "ts.scheduled_start",
      "ts.scheduled_end",
    );
    const oldIds = old.map((o) => o.id);
    for (let i = 0; i < oldIds.length; i += 500)
      await trx("training_sessions")
        .whereIn("id", oldIds.slice(i, i + 500))
        .del();
    const inserts = rows.map(
      (r) =>
        ({
          ...r,
          allocation_run_id: runId,
          status: "scheduled",
          created_at: now,
        }) satisfies TableInsert<"training_sessions">,
    );
    for (let i = 0; i < inserts.length; i += 200) await trx("training_sessions").insert(inserts.slice(i, i + 200));
    await trx("allocation_runs")
      .where({ id: runId })
      .update({
        published_at: now,
        published_by: userId,
        published_plan_version: expectedPlanVersion + 1,
        version: trx.raw("version + 1"),
      });
    // Readiness stage: workers with sessions are now "in a plan" (docs/architecture.md), recorded with time and actor.
    const planned = [...new Set(rows.map((r) => r.worker_id))];
    for (let i = 0; i < planned.length; i += 500) {
      const chunk = planned.slice(i, i + 500);
      const moving = await trx("workers")
        .whereIn("id", chunk)
        .whereIn("stage", ["consented", "baselined", "forecast"])
        .select("id", "stage");
      if (moving.length) {
        await trx("workers")
          .whereIn(
            "id",
            moving.map((m) => m.id),
          )
          .update({ stage: "planned", updated_at: now });
        await trx("stage_changes").insert(
          moving.map((m) => ({
            worker_id: m.id,
            from_stage: m.stage,
            to_stage: "planned",
            actor_user_id: userId,
            at: now,
          })),
        );
      }
    }
    return { version: expectedPlanVersion + 1, old };
  });

  const c = changes(old, rows);
  const outcome: PublishOutcome = {
    version,
    sessions: rows.length,
    unplaced,
    notified: [],
    unchanged: c.unchanged,
    mailFailures: [],
  };
  const who = await emails(db(), [...c.workers.keys()], [...c.trainers.keys()]);
  const mails: (() => Promise<void>)[] = [];

  // Session times are wall-clock times of the worker's site; calendar files name that site's zone.
  const zones = await workerTimeZones([...new Set([...c.workers.keys(), ...old.map((o) => o.worker_id)])]);
  const zoneOf = (workerDbId: number) => zones.get(workerDbId) ?? DEFAULT_TIME_ZONE;
  for (const [id, change] of c.workers) {
    const w = who.workers.get(id);
    if (!w?.email) continue;
    const mine = sessions.filter((s) => workers.get(s.workerId)?.workerId === id);
    const events =
      change === "cancelled"
        ? cancelledEvents(
            old.filter((o) => o.worker_id === id),
            `w${id}`,
            zoneOf,
          )
        : null;
    mails.push(() =>
      mailPerson(
        w.email!,
        w.name,
        "worker",
        change,
        events ??
          mine.map((s) => ({
            uid: `w${id}-${s.date}-${s.start.replace(":", "")}-${devices.get(s.deviceId)!.deviceTypeId}@limberly`,
            date: s.date,
            start: s.start,
            end: s.end,
            title: `Device training: ${devices.get(s.deviceId)!.name}`,
            description: `Trainer: ${trainers.get(s.trainerId)!.name}. Unit ${s.serial}. Wear-time limit ${devices.get(s.deviceId)!.wearTimeLimitMinutes} min per session. Check skin and fatigue before and after; stop at once on pain or numbness.`,
            location: `${devices.get(s.deviceId)!.site} training area`,
            timeZone: zoneOf(id),
          })),
        run.id,
      ),
    );
    outcome.notified.push({ email: w.email, kind: "worker", change });
  }
  for (const [id, change] of c.trainers) {
    const t = who.trainers.get(id);
    if (!t?.email) continue;
    // One event per shared slot: same day, time and device type.
    const cancelled =
      change === "cancelled"
        ? cancelledEvents(
            old.filter((o) => o.trainer_id === id),
            `t${id}`,
            zoneOf,
            true,
          )
        : null;
    const slots = new Map<string, PackedSession[]>();
    for (const s of sessions.filter((x) => trainers.get(x.trainerId)?.trainerId === id)) {
      const k = `${s.date}|${s.start}|${s.deviceId}`;
      (slots.get(k) ?? slots.set(k, []).get(k)!).push(s);
    }
    mails.push(() =>
      mailPerson(
        t.email!,
        t.name,
        "trainer",
        change,
        cancelled ??
          [...slots.values()].map((group) => {
            const s = group[0];
            const end = group
              .map((g) => g.end)
              .sort()
              .at(-1)!;
            return {
              uid: `t${id}-${s.date}-${s.start.replace(":", "")}-${devices.get(s.deviceId)!.deviceTypeId}@limberly`,
              date: s.date,
              start: s.start,
              end,
              title: `Training session: ${devices.get(s.deviceId)!.name} (${group.length} trainee${group.length > 1 ? "s" : ""})`,
              description: `Trainees: ${group.map((g) => `${workers.get(g.workerId)!.name} (unit ${g.serial}, until ${g.end})`).join("; ")}. Keep to the wear-time limit; check skin and fatigue; stop on pain or numbness.`,
              location: `${devices.get(s.deviceId)!.site} training area`,
              timeZone: zoneOf(workers.get(s.workerId)!.workerId),
            };
          }),
        run.id,
      ),
    );
    outcome.notified.push({ email: t.email, kind: "trainer", change });
  }
  // A few at a time: one SMTP conversation per person, without holding the coordinator's request for minutes.
  let next = 0;
  const lane = async () => {
    while (next < mails.length) {
      const send = mails[next++];
      try {
        await send();
      } catch (e) {
        outcome.mailFailures.push(e instanceof Error ? e.message : String(e));
      }
    }
  };
  await Promise.all(Array.from({ length: Math.min(6, mails.length) }, lane));
  return outcome;
}

/** Cancellation events for sessions of the previous plan, with the same UIDs they were sent with. */
function cancelledEvents(
  old: OldSession[],
  who: string,
  zoneOf: (workerId: number) => string,
  grouped = false,
): CalendarSession[] {
  const seen = new Set<string>();
  const out: CalendarSession[] = [];
  for (const o of old) {
    const date = dayOf(wallClock(o.scheduled_start));
    const start = hhmmOfWallClock(wallClock(o.scheduled_start));
    const end = hhmmOfWallClock(wallClock(o.scheduled_end));
    const uid = `${who}-${date}-${start.replace(":", "")}-${o.device_type_id}@limberly`;
    if (grouped && seen.has(uid)) continue;
    seen.add(uid);
    out.push({
      uid,
      date,
      start,
      end,
      title: "Device training (cancelled)",
      description: "This session is no longer in the published plan.",
      location: "",
      timeZone: zoneOf(o.worker_id),
    });
  }
  return out;
}

async function mailPerson(
  email: string,
  name: string,
  kind: "worker" | "trainer",
  change: "new" | "changed" | "cancelled",
  events: CalendarSession[],
  runId: number,
) {
  const cancel = change === "cancelled";
  const subject = cancel
    ? "Your device training sessions are cancelled"
    : change === "changed"
      ? "Your device training schedule has changed"
      : "Your device training schedule";
  const lines = events.map((e) => `- ${e.date} ${e.start}–${e.end}: ${e.title} (${e.location})`);
  const text = [
    `Hello ${name},`,
    "",
    cancel
      ? "The published training plan no longer has sessions for you. Your coordinator will be in touch if that is unexpected."
      : `${kind === "worker" ? "Your" : "Your trainer"} sessions in the published training plan (plan from run #${runId}):`,
    ...lines,
    "",
    "The attached calendar file adds them to your calendar.",
    "Safety: keep to each device's wear-time limit, check skin and fatigue before and after, and stop at once on pain, numbness or tingling. Fit is checked by a clinician; the manufacturer's instructions and local occupational-safety rules take precedence.",
    "",
    "— Limberly (training coordination)",
  ].join("\n");
  const ics = icsFile(events, { calName: "Device training", cancel });
  await sendMail({
    to: email,
    subject,
    text,
    attachments: [
      {
        filename: cancel ? "cancelled-sessions.ics" : "training-sessions.ics",
        content: ics,
        contentType: `text/calendar; charset=utf-8; method=${cancel ? "CANCEL" : "PUBLISH"}`,
      },
    ],
  });
}

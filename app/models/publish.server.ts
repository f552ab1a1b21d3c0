import type { Principal } from "~/auth/guard.server";
import { type PackedSession, packSessions, type UnplacedHours } from "~/compute/session-packing";
import { DEFAULT_TIME_ZONE, dayOf, hhmmOfWallClock, nowInstant, wallClock, wallClockAt } from "~/dates";
import { db, type TableInsert } from "~/db.server";
import { sendMail } from "~/mail.server";
import type { RunDetail } from "./allocation-runs.server";
import { getRun } from "./allocation-runs.server";
import { type CalendarSession, icsFile } from "./calendar.server";
import { workerTimeZones } from "./sites.server";

// Publishing a plan: a coordinator's decision. The run's weekly hours become dated sessions
// (app/compute/session-packing.ts); every scheduled session of the previously published plan is replaced in
// ONE transaction, guarded by the published-plan version (optimistic check: of two coordinators publishing
// from the same version, the second is refused and told who won). After the commit, e-mail with an .ics file
// goes to each worker and trainer whose sessions changed — and only to them.

export class PublishConflict extends Error {
  constructor(readonly current: { version: number; runId: number | null; by: string | null; at: string | null }) {
    super(
      `Someone else published first: the plan is now at version ${current.version}${current.runId ? ` (run #${current.runId}` : ""}${current.by ? ` by ${current.by}` : ""}${current.at ? ` at ${current.at.slice(0, 16).replace("T", " ")}` : ""}${current.runId ? ")" : ""}. Nothing of yours was published; look at the current plan and publish again if you still want this run.`,
    );
  }
}
export class PublishRefused extends Error {}

export interface PlanState {
  version: number;
  runId: number | null;
  by: string | null;
  at: string | null;
}

export async function planState(): Promise<PlanState> {
  await db()("published_plan_state").insert({ id: 1, version: 0 }).onConflict("id").ignore();
  const r = await db()("published_plan_state as s")
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

/** Dated sessions the run would publish (pure packing of its plan over its snapshot's calendar). */
export function previewSessions(run: RunDetail): { sessions: PackedSession[]; unplaced: UnplacedHours[] } {
  if (!run.snapshot || !run.plan) return { sessions: [], unplaced: [] };
  return packSessions(run.snapshot.calendar, run.plan.assignments);
}

export function publishRefusal(run: RunDetail): string | null {
  if (run.status !== "done" || !run.plan || !run.snapshot) return "Only a finished run can be published.";
  if (run.plan.status === "infeasible") return "This run has no feasible plan to publish.";
  if (run.parameters.whatIf.addUnits.length > 0)
    return "This what-if run adds device units that do not exist yet, so it cannot be published. Add the units to the fleet and start a new run.";
  return null;
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

export async function publishRun(
  principal: Principal,
  runId: number,
  expectedPlanVersion: number,
): Promise<PublishOutcome> {
  const run = await getRun(principal.scope, runId);
  if (!run) throw new PublishRefused("No such run in your scope.");
  const refusal = publishRefusal(run);
  if (refusal) throw new PublishRefused(refusal);
  const snapshot = run.snapshot!;
  const { sessions, unplaced } = previewSessions(run);
  const devices = new Map(snapshot.calendar.devices.map((d) => [d.id, d]));
  const trainers = new Map(snapshot.calendar.trainers.map((t) => [t.id, t]));
  const workers = new Map(snapshot.calendar.workers.map((w) => [w.id, w]));
  const userId = principal.kind === "user" ? principal.user.id : null;
  const now = nowInstant();
  await planState(); // makes sure the counter row exists

  const rows = sessions.map(
    (s) =>
      ({
        worker_id: workers.get(s.workerId)!.workerId,
        device_type_id: devices.get(s.deviceId)!.deviceTypeId,
        trainer_id: trainers.get(s.trainerId)!.trainerId,
        device_unit_id: s.unitId,
        allocation_run_id: runId,
        scheduled_start: wallClockAt(s.date, s.start),
        scheduled_end: wallClockAt(s.date, s.end),
        status: "scheduled",
        created_at: now,
      }) satisfies TableInsert<"training_sessions">,
  );

  const { version, old } = await db().transaction(async (trx) => {
    const won = await trx("published_plan_state")
      .where({ id: 1, version: expectedPlanVersion })
      .update({ version: expectedPlanVersion + 1, current_run_id: runId, published_by: userId, published_at: now });
    if (Number(won) !== 1) {
      const r = await trx("published_plan_state as s")
        .leftJoin("users as u", "u.id", "s.published_by")
        .where("s.id", 1)
        .first("s.version", "s.current_run_id", "s.published_at", "u.display_name");
      throw new PublishConflict({
        version: Number(r?.version ?? 0),
        runId: r?.current_run_id ?? null,
        by: r?.display_name ?? null,
        at: r?.published_at ? String(r.published_at) : null,
      });
    }
    const old: OldSession[] = await trx("training_sessions")
      .whereNotNull("allocation_run_id")
      .where({ status: "scheduled" })
      .select("worker_id", "trainer_id", "device_type_id", "device_unit_id", "scheduled_start", "scheduled_end");
    await trx("training_sessions").whereNotNull("allocation_run_id").where({ status: "scheduled" }).del();
    for (let i = 0; i < rows.length; i += 200) await trx("training_sessions").insert(rows.slice(i, i + 200));
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

  // Who changed: compare each person's sessions before and after.
  const fp = (items: string[]) => items.sort().join("\n");
  const oldWorker = new Map<number, string[]>();
  const oldTrainer = new Map<number, string[]>();
  for (const o of old) {
    const key = `${wallClock(o.scheduled_start)}|${wallClock(o.scheduled_end)}|${o.device_type_id}|${o.device_unit_id}`;
    (oldWorker.get(o.worker_id) ?? oldWorker.set(o.worker_id, []).get(o.worker_id)!).push(`${key}|${o.trainer_id}`);
    if (o.trainer_id != null)
      (oldTrainer.get(o.trainer_id) ?? oldTrainer.set(o.trainer_id, []).get(o.trainer_id)!).push(
        `${key}|${o.worker_id}`,
      );
  }
  const newWorker = new Map<number, string[]>();
  const newTrainer = new Map<number, string[]>();
  for (const r of rows) {
    const key = `${r.scheduled_start}|${r.scheduled_end}|${r.device_type_id}|${r.device_unit_id}`;
    (newWorker.get(r.worker_id) ?? newWorker.set(r.worker_id, []).get(r.worker_id)!).push(`${key}|${r.trainer_id}`);
    (newTrainer.get(r.trainer_id) ?? newTrainer.set(r.trainer_id, []).get(r.trainer_id)!).push(`${key}|${r.worker_id}`);
  }

  const outcome: PublishOutcome = {
    version,
    sessions: rows.length,
    unplaced,
    notified: [],
    unchanged: 0,
    mailFailures: [],
  };
  const byWorkerDb = new Map(snapshot.calendar.workers.map((w) => [w.workerId, w]));
  const byTrainerDb = new Map(snapshot.calendar.trainers.map((t) => [t.trainerId, t]));
  const mails: (() => Promise<void>)[] = [];

  const workerIds = [...new Set([...oldWorker.keys(), ...newWorker.keys()])].sort((a, b) => a - b);
  // Session times are wall-clock times of the worker's site; calendar files name that site's zone.
  const zones = await workerTimeZones(workerIds);
  const zoneOf = (workerDbId: number) => zones.get(workerDbId) ?? DEFAULT_TIME_ZONE;
  const missingWorkers = workerIds.filter((id) => !byWorkerDb.has(id));
  const extraWorkers = new Map<number, { name: string; email: string | null }>();
  if (missingWorkers.length) {
    for (const w of await db()("workers")
      .whereIn("id", missingWorkers)
      .select("id", "given_name", "family_name", "email"))
      extraWorkers.set(w.id, { name: `${w.given_name} ${w.family_name}`, email: w.email });
  }
  for (const id of workerIds) {
    const before = fp(oldWorker.get(id) ?? []);
    const after = fp(newWorker.get(id) ?? []);
    if (before === after) {
      outcome.unchanged++;
      continue;
    }
    const w = byWorkerDb.get(id) ?? extraWorkers.get(id);
    if (!w?.email) continue;
    const change = !newWorker.has(id) ? "cancelled" : oldWorker.has(id) ? "changed" : "new";
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
  const trainerIds = [...new Set([...oldTrainer.keys(), ...newTrainer.keys()])].sort((a, b) => a - b);
  const extraTrainers = new Map<number, { name: string; email: string | null }>();
  const missingTrainers = trainerIds.filter((id) => !byTrainerDb.has(id));
  if (missingTrainers.length) {
    for (const t of await db()("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .whereIn("t.id", missingTrainers)
      .select("t.id", "u.display_name", "u.email"))
      extraTrainers.set(t.id, { name: t.display_name, email: t.email });
  }
  for (const id of trainerIds) {
    const before = fp(oldTrainer.get(id) ?? []);
    const after = fp(newTrainer.get(id) ?? []);
    if (before === after) {
      outcome.unchanged++;
      continue;
    }
    const t = byTrainerDb.get(id) ?? extraTrainers.get(id);
    if (!t?.email) continue;
    const change = !newTrainer.has(id) ? "cancelled" : oldTrainer.has(id) ? "changed" : "new";
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

// What the season left behind, read from the database and the SMTP catcher's outbox, as checks: each has the
// number found, the number allowed and whether it holds. The test asserts them; the script prints them.
import { addDays } from "../../app/dates/calendar";
import { readOutbox } from "../smtp-catcher";
import { cohortSize, SEASON } from "./parameters";
import { type SeasonDb, type SeasonLog, STAFF } from "./simulate";

export interface SeasonCheck {
  check: string;
  found: number | string;
  expected: number | string;
  ok: boolean;
  detail?: string;
}

const count = async (q: ReturnType<SeasonDb>): Promise<number> => Number((await q.count({ n: "*" }).first())?.n ?? 0);

export async function seasonChecks(k: SeasonDb, outboxDir: string, log: SeasonLog): Promise<SeasonCheck[]> {
  const out: SeasonCheck[] = [];
  const add = (c: SeasonCheck) => out.push(c);
  const cohort = await k("workers").whereIn("employee_number", log.hires).orderBy("id").select("id", "stage", "email");
  const ids = cohort.map((w) => w.id as number);
  const seasonStart = `${SEASON.startMonday}T00:00:00`;

  add({
    check: "cohort imported",
    found: cohort.length,
    expected: `≥ 120 (${cohortSize()})`,
    ok: cohort.length >= 120 && cohort.length === cohortSize(),
  });

  // Final states: ready, stopped, withdrawn, or still training with sessions scheduled after the last week.
  const ready = new Set(cohort.filter((w) => w.stage === "proficient").map((w) => w.id));
  // Withdrawn: assessment consent withdrawn (stage) or planning consent withdrawn (its latest record).
  const latestPlanning = await k("consent_records")
    .whereIn("worker_id", ids)
    .where({ purpose: "planning" })
    .orderBy("id")
    .select("worker_id", "status");
  const planningNow = new Map(latestPlanning.map((r) => [r.worker_id as number, r.status as string]));
  const withdrawn = new Set(
    cohort.filter((w) => w.stage === "withdrawn" || planningNow.get(w.id) === "withdrawn").map((w) => w.id),
  );
  const stopped = new Set(
    await k("device_courses").whereIn("worker_id", ids).where({ status: "stopped" }).pluck("worker_id"),
  );
  // With a plan: sessions in the plan in force (the last week's published run) or scheduled after the season.
  const planned = new Set(
    await k("training_sessions")
      .whereIn("worker_id", ids)
      .whereNot("status", "cancelled")
      .where((q) =>
        q
          .where("allocation_run_id", log.runs[log.runs.length - 1] ?? -1)
          .orWhere((x) => x.where({ status: "scheduled" }).where("scheduled_start", ">=", afterSeason())),
      )
      .distinct()
      .pluck("worker_id"),
  );
  const stuck = cohort.filter(
    (w) => !ready.has(w.id) && !withdrawn.has(w.id) && !stopped.has(w.id) && !planned.has(w.id),
  );
  const inPlan = cohort.filter(
    (w) => !ready.has(w.id) && !withdrawn.has(w.id) && !stopped.has(w.id) && planned.has(w.id),
  );
  add({ check: "ready (proficient)", found: ready.size, expected: "—", ok: ready.size > 0 });
  add({ check: "still training, with a plan", found: inPlan.length, expected: "—", ok: true });
  add({ check: "stopped", found: stopped.size, expected: "—", ok: true });
  add({
    check: "withdrawn",
    found: withdrawn.size,
    expected: SEASON.withdrawalWeeks.length,
    ok: withdrawn.size === SEASON.withdrawalWeeks.length,
  });
  add({
    check: "stuck (none of the above)",
    found: stuck.length,
    expected: 0,
    ok: stuck.length === 0,
    detail: stuck
      .slice(0, 5)
      .map((w) => `worker ${w.id} (${w.stage})`)
      .join(", "),
  });

  // No published session overlaps another for the same worker or device unit. A trainer may teach a group:
  // sessions at once on one device type, at most the trainer's trainees per session.
  const sessions = await k("training_sessions as s")
    .leftJoin("trainers as t", "t.id", "s.trainer_id")
    .whereNot("s.status", "cancelled")
    .whereNotNull("s.allocation_run_id")
    .where("s.scheduled_start", ">=", seasonStart)
    .orderBy([{ column: "s.scheduled_start" }, { column: "s.id" }])
    .select(
      "s.worker_id",
      "s.trainer_id",
      "s.device_unit_id",
      "s.device_type_id",
      "s.scheduled_start as start",
      "s.scheduled_end as end",
      "t.trainees_per_session as capacity",
    );
  for (const [col, label] of [
    ["worker_id", "worker"],
    ["device_unit_id", "device unit"],
    ["trainer_id", "trainer (beyond one group on one device type)"],
  ] as const) {
    const active = new Map<number, (typeof sessions)[number][]>();
    let clashes = 0;
    for (const x of sessions) {
      const key = x[col] as number | null;
      if (key == null) continue;
      const now = (active.get(key) ?? []).filter((y) => y.end > x.start);
      const group = col === "trainer_id" && now.every((y) => y.device_type_id === x.device_type_id);
      if (now.length > 0 && !(group && now.length + 1 <= Number(x.capacity))) clashes++;
      active.set(key, [...now, x]);
    }
    add({ check: `overlapping sessions, same ${label}`, found: clashes, expected: 0, ok: clashes === 0 });
  }
  const published = await count(
    k("training_sessions").whereIn("allocation_run_id", log.runs).whereNot("status", "cancelled"),
  );
  add({ check: "sessions published (not cancelled)", found: published, expected: "> 0", ok: published > 0 });
  add({ check: "sessions logged", found: log.sessionsLogged, expected: "> 0", ok: log.sessionsLogged > 0 });
  add({ check: "no-shows marked", found: log.noShows, expected: "—", ok: true });
  const leftOpen = await count(
    k("training_sessions")
      .whereIn("worker_id", ids)
      .where({ status: "scheduled" })
      .where("scheduled_start", "<", afterSeason()),
  );
  add({ check: "sessions of the season left unlogged", found: leftOpen, expected: 0, ok: leftOpen === 0 });
  // A course that reached proficiency keeps no session that could never be logged.
  const afterReady = await count(
    k("training_sessions as s")
      .where("s.status", "scheduled")
      .whereExists(
        k("device_courses as c")
          .whereRaw("c.worker_id = s.worker_id and c.device_type_id = s.device_type_id")
          .where("c.status", "proficient"),
      ),
  );
  add({ check: "sessions still scheduled after proficiency", found: afterReady, expected: 0, ok: afterReady === 0 });

  // Leave and maintenance keep the trainer and the unit free; the model has two assessors' names on it.
  const during = (q: ReturnType<SeasonDb>, r: { startsOn: string; endsOn: string }) =>
    q
      .whereNot("status", "cancelled")
      .where("scheduled_start", ">=", `${r.startsOn}T00:00:00`)
      .where("scheduled_start", "<", `${addDays(r.endsOn, 1)}T00:00:00`);
  const onLeave = log.leave
    ? await count(during(k("training_sessions").where({ trainer_id: log.leave.trainerId }), log.leave))
    : Number.NaN;
  add({ check: "sessions of the trainer on leave (3 weeks)", found: onLeave, expected: 0, ok: onLeave === 0 });
  const inMaintenance = log.maintenance
    ? await count(during(k("training_sessions").where({ device_unit_id: log.maintenance.unitId }), log.maintenance))
    : Number.NaN;
  add({ check: "sessions on the unit in maintenance", found: inMaintenance, expected: 0, ok: inMaintenance === 0 });
  const model = log.modelVersionId
    ? await k("model_versions").where({ id: log.modelVersionId }).first("status", "fitted_by", "approved_by")
    : null;
  add({
    check: "new model version approved by a second assessor",
    found: model ? `${model.status}, ${model.fitted_by === model.approved_by ? "same" : "two"} assessors` : "none",
    expected: "approved, two assessors",
    ok: model?.status === "approved" && model.fitted_by !== model.approved_by,
  });
  const resumedBack = await Promise.all(
    log.resumed.map((r) =>
      count(
        k("training_sessions")
          .where({ worker_id: r.workerId, device_type_id: r.deviceTypeId, status: "attended" })
          .whereExists(
            k("course_reviews as cr")
              .whereRaw("cr.worker_id = training_sessions.worker_id")
              .whereRaw("cr.decided_at < training_sessions.logged_at"),
          ),
      ),
    ),
  );
  add({
    check: "resumed workers who trained again",
    found: resumedBack.filter((n) => n > 0).length,
    expected: log.resumed.length,
    ok: log.resumed.length === SEASON.severeEventWeeks.length && resumedBack.every((n) => n > 0),
  });

  // E-mail: each caught message is one the season's actions call for, to exactly the right people.
  const mail = readOutbox(outboxDir);
  const assessorsOf = new Set<string>([STAFF.assessor, STAFF.assessor2]);
  const plan = mail.filter(
    (m) => /^Your (device training|trainer)/.test(m.subject) || /training (schedule|sessions)/.test(m.subject),
  );
  const planTo = plan.flatMap((m) => m.to).sort();
  const expectedPlanTo = [...log.publishedTo].sort();
  add({
    check: "plan e-mails = people each publish named",
    found: planTo.length,
    expected: expectedPlanTo.length,
    ok: planTo.length > 0 && JSON.stringify(planTo) === JSON.stringify(expectedPlanTo),
  });
  add({
    check: "severe events logged (course paused)",
    found: log.severe.length,
    expected: SEASON.severeEventWeeks.length,
    ok: log.severe.length === SEASON.severeEventWeeks.length,
  });
  const severeMail = mail.filter((m) => m.subject.startsWith("Training paused: severe adverse event"));
  add({
    check: "severe-event e-mails to the site's assessors only",
    found: severeMail.length,
    expected: log.severe.length,
    ok:
      severeMail.length === log.severe.length &&
      severeMail.every((m) => m.to.length === assessorsOf.size && m.to.every((t) => assessorsOf.has(t))) &&
      log.severe.every((e) => severeMail.some((m) => m.subject.endsWith(e.employeeNumber))),
  });
  const byId = new Map(cohort.map((w) => [w.id, w.email as string]));
  const resumeMail = mail.filter((m) => /can resume$/.test(m.subject));
  add({
    check: "resume e-mails to the worker",
    found: resumeMail.length,
    expected: log.resumed.length,
    ok:
      resumeMail.length === log.resumed.length &&
      log.resumed.every((r) => resumeMail.some((m) => m.to.length === 1 && m.to[0] === byId.get(r.workerId))),
  });
  const backMail = mail.filter((m) => m.subject.startsWith("Back from a pause"));
  add({
    check: "back-from-pause e-mails to the coordinator",
    found: backMail.length,
    expected: log.resumed.length,
    ok:
      backMail.length === log.resumed.length &&
      backMail.every((m) => m.to.length === 1 && m.to[0] === STAFF.coordinator),
  });
  const known = new Set([...plan, ...severeMail, ...resumeMail, ...backMail]);
  const other = mail.filter((m) => !known.has(m));
  add({
    check: "other e-mails",
    found: other.length,
    expected: 0,
    ok: other.length === 0,
    detail: other
      .slice(0, 3)
      .map((m) => `${m.subject} → ${m.to.join(", ")}`)
      .join("; "),
  });

  // Forecasts for every cohort worker with a baseline, planning consent and an approved model for the device.
  const approved = await k("model_versions").where({ status: "approved" }).pluck("device_type_id");
  const eligible = await k("workers as w")
    .whereIn("w.id", ids)
    .whereExists(k("assessment_sessions as a").whereRaw("a.worker_id = w.id"))
    .whereExists(
      k("consent_records as c").whereRaw("c.worker_id = w.id").where({ "c.purpose": "planning", "c.status": "given" }),
    )
    .pluck("w.id");
  const pairs = await k("forecasts")
    .whereIn("worker_id", eligible)
    .whereIn("device_type_id", approved)
    .select("worker_id", "device_type_id");
  const have = new Set(pairs.map((p) => `${p.worker_id}:${p.device_type_id}`));
  // A paused or stopped course has no forecast on purpose (the page says so).
  const halted = new Set(
    (
      await k("device_courses")
        .whereIn("worker_id", eligible)
        .whereIn("status", ["paused", "stopped"])
        .select("worker_id", "device_type_id")
    ).map((c) => `${c.worker_id}:${c.device_type_id}`),
  );
  const missing = eligible.flatMap((w) =>
    approved.map((d) => `${w}:${d}`).filter((key) => !have.has(key) && !halted.has(key)),
  );
  add({
    check: "eligible worker × device without a forecast",
    found: missing.length,
    expected: 0,
    ok: eligible.length > 0 && missing.length === 0,
    detail: `${eligible.length} eligible workers, ${approved.length} device types with an approved model; ${missing.slice(0, 5).join(", ")}`,
  });

  // The access log: one row per page of one person's health data opened, none for list pages.
  const seasonReads = () => k("access_log").where("at", ">=", log.startedAt);
  const planRows = await count(seasonReads().where("route", "like", "/coordinate/runs/%"));
  const personRows = await count(seasonReads().whereNot("route", "like", "/coordinate/runs/%"));
  add({
    check: "access-log rows = person pages rendered",
    found: personRows,
    expected: log.individualReads,
    ok: log.individualReads > 0 && personRows === log.individualReads,
  });
  add({
    check: "access-log rows = workers on run pages opened",
    found: planRows,
    expected: log.planReads,
    ok: planRows === log.planReads,
  });
  const listRows = await count(seasonReads().whereIn("route", ["/train", "/coordinate/runs", "/coordinate/schedule"]));
  add({ check: "access-log rows from list pages", found: listRows, expected: 0, ok: listRows === 0 });

  // The clock: what the season wrote is dated in the season.
  const lastStage = await k("stage_changes").whereIn("worker_id", ids).max({ at: "at" }).first();
  const lastAt = new Date(String(lastStage?.at)).toISOString();
  add({
    check: "last stage change dated in the season",
    found: lastAt.slice(0, 10),
    expected: `${SEASON.startMonday} … ${afterSeason().slice(0, 10)}`,
    ok: lastAt >= log.startedAt && lastAt < `${afterSeason()}Z`,
  });
  return out;
}

/** The Monday after the season's last week (site wall clock). */
function afterSeason(): string {
  return `${addDays(SEASON.startMonday, SEASON.weeks * 7)}T00:00:00`;
}

/** The checks as a plain table, with the season's timing. */
export function formatReport(checks: SeasonCheck[], seconds: number, phases: Record<string, number> = {}): string {
  const rows = [
    ["check", "found", "expected", ""],
    ...checks.map((c) => [c.check, String(c.found), String(c.expected), c.ok ? "ok" : "FAIL"]),
  ];
  const widths = rows[0].map((_, i) => Math.max(...rows.map((r) => r[i].length)));
  const line = (r: string[]) => `| ${r.map((c, i) => c.padEnd(widths[i])).join(" | ")} |`;
  const detail = checks.filter((c) => !c.ok && c.detail).map((c) => `  ${c.check}: ${c.detail}`);
  return [
    `Season: ${cohortSize()} workers at ${SEASON.sites.join(" and ")}, ${SEASON.weeks} weeks from ${SEASON.startMonday}, simulated in ${seconds.toFixed(1)} s`,
    line(rows[0]),
    `|${widths.map((w) => "-".repeat(w + 2)).join("|")}|`,
    ...rows.slice(1).map(line),
    ...detail,
    `Time by phase: ${Object.entries(phases)
      .map(([k, ms]) => `${k} ${(ms / 1000).toFixed(1)} s`)
      .join(" · ")}`,
  ].join("\n");
}

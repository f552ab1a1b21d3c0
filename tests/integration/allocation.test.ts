import crypto from "node:crypto";
import { describe, expect, inject, it } from "vitest";
import { readOutbox } from "../../scripts/smtp-catcher";
import { type CheckSession, type CheckSite, checkSessionRules } from "../reference/session-rules-checker";
import {
  type Browserless,
  baseUrl,
  PERSONA,
  pageText,
  runFinished,
  type ScheduledSessionRow,
  scheduledSessionsOfRun,
  signIn,
  testDb,
} from "./helpers";

// Allocator application against the real built server and the seeded demo database: runs solve in
// the background (worker thread) and report progress; publishing writes dated sessions that keep every rule
// of the second stage (checked here session by session from the database, not from the app's own code);
// two publishes from the same plan version: exactly one wins; republishing e-mails only the people whose
// sessions changed (recomputed here from the sessions before and after); the API refuses other roles' keys.

const k = () => testDb();
const minutes = (hhmm: string) => Number(hhmm.slice(0, 2)) * 60 + Number(hhmm.slice(3, 5));

async function startRun(client: Browserless, fields: Record<string, string | string[]>): Promise<number> {
  const res = await client.postForm("/coordinate/runs", fields);
  expect(
    res.status,
    await res
      .clone()
      .text()
      .then((t) => t.slice(0, 300)),
  ).toBe(302);
  const m = /\/coordinate\/runs\/(\d+)$/.exec(res.headers.get("Location") ?? "");
  expect(m).not.toBeNull();
  return Number(m![1]);
}

const waitDone = runFinished;

async function planVersionOnPage(client: Browserless, id: number): Promise<number> {
  const html = await (await client.request(`/coordinate/runs/${id}`)).text();
  const m = /name="expectedPlanVersion" value="(\d+)"/.exec(html);
  expect(m, "the run page offers a publish form").not.toBeNull();
  return Number(m![1]);
}

const RUN = { startDate: "2026-12-07", horizonWeeks: "6", fairnessShare: "20" };

type SessionRow = ScheduledSessionRow;
const sessionsOf = scheduledSessionsOfRun;

/** Independent check of every published session against the second-stage rules of docs/methods.md. */
async function checkSessions(rows: SessionRow[]) {
  const isoWeekday = (d: string) => {
    const x = new Date(`${d}T00:00:00Z`).getUTCDay();
    return x === 0 ? 7 : x;
  };
  const mondayOf = (d: string) => {
    const x = new Date(`${d}T00:00:00Z`);
    x.setUTCDate(x.getUTCDate() - (isoWeekday(d) - 1));
    return x.toISOString().slice(0, 10);
  };
  const patterns = await k()("trainer_working_pattern").select("trainer_id", "weekday", "start_time", "end_time");
  const tleave = await k()("trainer_leave").select("trainer_id", "starts_on", "ends_on");
  const wleave = await k()("worker_leave").select("worker_id", "starts_on", "ends_on");
  const units = new Map(
    (await k()("device_units").select("id", "status", "bookable_hours_per_week", "device_type_id")).map((u) => [
      u.id,
      u,
    ]),
  );
  const maint = await k()("unit_maintenance_windows").select("device_unit_id", "starts_on", "ends_on");
  const trainers = new Map(
    (await k()("trainers").select("id", "hours_per_week", "trainees_per_session")).map((t) => [t.id, t]),
  );
  const wear = new Map(
    (await k()("device_types").select("id", "wear_time_limit_minutes")).map((d) => [
      d.id,
      Number(d.wear_time_limit_minutes),
    ]),
  );
  const certs = await k()("trainer_certifications").select("trainer_id", "device_type_id");
  const unitWeek = new Map<string, number>();
  const workerDay = new Set<string>();
  const slots = new Map<string, { trainer: number; date: string; from: number; to: number; n: number }>();
  for (const s of rows) {
    const [date, st] = s.scheduled_start.split("T");
    const [date2, en] = s.scheduled_end.split("T");
    const from = minutes(st);
    const to = minutes(en);
    expect(date2, `session ${s.id} ends on its own day`).toBe(date);
    expect(to - from, `session ${s.id} has a positive length`).toBeGreaterThan(0);
    expect(to - from, `session ${s.id} within the wear-time limit`).toBeLessThanOrEqual(wear.get(s.device_type_id)!);
    // trainer: certified, inside a working window of that weekday, not on leave
    expect(
      certs.some((c) => c.trainer_id === s.trainer_id && c.device_type_id === s.device_type_id),
      `session ${s.id}: trainer certified`,
    ).toBe(true);
    const windows = patterns.filter((p) => p.trainer_id === s.trainer_id && Number(p.weekday) === isoWeekday(date));
    expect(
      windows.some((w) => minutes(w.start_time) <= from && to <= minutes(w.end_time)),
      `session ${s.id} ${date} ${st}–${en} inside trainer ${s.trainer_id}'s working hours`,
    ).toBe(true);
    expect(
      tleave.some((l) => l.trainer_id === s.trainer_id && date >= l.starts_on && date <= l.ends_on),
      `session ${s.id}: trainer not on leave`,
    ).toBe(false);
    expect(
      wleave.some((l) => l.worker_id === s.worker_id && date >= l.starts_on && date <= l.ends_on),
      `session ${s.id}: worker not on leave`,
    ).toBe(false);
    // unit: in service, right type, not in maintenance, weekly bookable hours
    const u = units.get(s.device_unit_id)!;
    expect(u.status).toBe("in_service");
    expect(u.device_type_id).toBe(s.device_type_id);
    expect(
      maint.some((m) => m.device_unit_id === s.device_unit_id && date >= m.starts_on && date <= m.ends_on),
      `session ${s.id}: unit not in maintenance`,
    ).toBe(false);
    const uw = `${s.device_unit_id}|${mondayOf(date)}`;
    unitWeek.set(uw, (unitWeek.get(uw) ?? 0) + (to - from));
    // one session per worker per day
    const wd = `${s.worker_id}|${date}`;
    expect(workerDay.has(wd), `worker ${s.worker_id} has one session on ${date}`).toBe(false);
    workerDay.add(wd);
    // shared trainer slots: same trainer, day and start
    const key = `${s.trainer_id}|${date}|${from}`;
    const slot = slots.get(key) ?? { trainer: s.trainer_id, date, from, to, n: 0 };
    slot.to = Math.max(slot.to, to);
    slot.n++;
    slots.set(key, slot);
  }
  for (const [key, used] of unitWeek) {
    const unitId = Number(key.split("|")[0]);
    expect(used, `unit ${key} booked within its bookable hours`).toBeLessThanOrEqual(
      Number(units.get(unitId)!.bookable_hours_per_week) * 60 + 1e-9,
    );
  }
  const all = [...slots.values()];
  for (const a of all) {
    expect(a.n, `slot ${a.trainer} ${a.date} ${a.from}: trainees per session`).toBeLessThanOrEqual(
      Number(trainers.get(a.trainer)!.trainees_per_session),
    );
    for (const b of all)
      if (a !== b && a.trainer === b.trainer && a.date === b.date)
        expect(a.from < b.to && b.from < a.to, `trainer ${a.trainer} double-booked on ${a.date}`).toBe(false);
  }
  // the session rules, read from the database and checked by the independent checker: lengths between the
  // device type's shortest and longest (a worker's stricter wear-time limit lowers the longest), no session on
  // a closure day or outside the site's working hours, the trainer's breaks, nobody and no unit twice at once
  const types = new Map((await k()("device_types").select("*")).map((d) => [d.id, d]));
  const courseLimits = await k()("device_courses")
    .whereNotNull("wear_time_limit_minutes")
    .select("worker_id", "device_type_id", "wear_time_limit_minutes");
  const workerSite = new Map((await k()("workers").select("id", "site_id")).map((w) => [w.id, w.site_id]));
  const hoursRows = await k()("site_working_hours").select("site_id", "weekday", "start_time", "end_time");
  const closureRows = await k()("site_closures").select("site_id", "starts_on", "ends_on");
  const sites: Record<string, CheckSite> = {};
  for (const s of await k()("sites").select("id")) {
    const mine = hoursRows.filter((h) => h.site_id === s.id);
    sites[String(s.id)] = {
      hours: mine.length
        ? mine.map((h) => ({ weekday: Number(h.weekday), start: h.start_time, end: h.end_time }))
        : null,
      closures: closureRows
        .filter((c) => c.site_id === s.id)
        .map((c) => ({ startsOn: c.starts_on, endsOn: c.ends_on })),
    };
  }
  const breakRules = Object.fromEntries(
    (await k()("trainers").select("id", "max_continuous_minutes", "break_minutes", "trainees_per_session")).map((t) => [
      String(t.id),
      {
        maxContinuousMinutes: Number(t.max_continuous_minutes),
        breakMinutes: Number(t.break_minutes),
        traineesPerSession: Number(t.trainees_per_session),
      },
    ]),
  );
  const checked: CheckSession[] = rows.map((s) => {
    const d = types.get(s.device_type_id);
    const own = courseLimits.find((c) => c.worker_id === s.worker_id && c.device_type_id === s.device_type_id);
    const max = Math.min(
      Number(d.max_session_minutes),
      Number(d.wear_time_limit_minutes),
      own ? Number(own.wear_time_limit_minutes) : Number.POSITIVE_INFINITY,
    );
    return {
      worker: String(s.worker_id),
      trainer: String(s.trainer_id),
      device: String(s.device_type_id),
      unit: String(s.device_unit_id),
      site: String(workerSite.get(s.worker_id)),
      date: s.scheduled_start.slice(0, 10),
      start: s.scheduled_start.slice(11, 16),
      end: s.scheduled_end.slice(11, 16),
      min: Math.min(Number(d.min_session_minutes), max),
      max,
    };
  });
  expect(checkSessionRules(sites, breakRules, checked)).toEqual([]);
  // unit overlaps
  const byUnitDay = new Map<string, [number, number][]>();
  for (const s of rows) {
    const [date, st] = s.scheduled_start.split("T");
    const list = byUnitDay.get(`${s.device_unit_id}|${date}`) ?? [];
    const iv: [number, number] = [minutes(st), minutes(s.scheduled_end.split("T")[1])];
    expect(
      list.some(([f, t]) => iv[0] < t && f < iv[1]),
      `unit ${s.device_unit_id} double-booked on ${date}`,
    ).toBe(false);
    list.push(iv);
    byUnitDay.set(`${s.device_unit_id}|${date}`, list);
  }
}

function fingerprints(rows: SessionRow[]) {
  const worker = new Map<number, string[]>();
  const trainer = new Map<number, string[]>();
  for (const r of rows) {
    const key = `${r.scheduled_start}|${r.scheduled_end}|${r.device_type_id}|${r.device_unit_id}`;
    worker.set(r.worker_id, [...(worker.get(r.worker_id) ?? []), `${key}|${r.trainer_id}`]);
    trainer.set(r.trainer_id, [...(trainer.get(r.trainer_id) ?? []), `${key}|${r.worker_id}`]);
  }
  const fp = (m: Map<number, string[]>) => new Map([...m].map(([id, l]) => [id, l.sort().join("\n")]));
  return { worker: fp(worker), trainer: fp(trainer) };
}

function changedIds(before: Map<number, string>, after: Map<number, string>): number[] {
  return [...new Set([...before.keys(), ...after.keys()])]
    .filter((id) => before.get(id) !== after.get(id))
    .sort((a, b) => a - b);
}

describe("allocation runs", () => {
  it("refuse bad parameters with a message naming the field", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const runsBefore = await k()("allocation_runs").count({ n: "*" }).first();
    const res = await client.postForm("/coordinate/runs", {
      startDate: "2026-12-08",
      horizonWeeks: "0",
      fairnessShare: "120",
    });
    // Every form action answers bad input with 400 and the page, messages at the fields; no run is created.
    expect(res.status).toBe(400);
    expect(await k()("allocation_runs").count({ n: "*" }).first()).toEqual(runsBefore);
    const html = await res.text();
    expect(html).toContain("The start date must be a Monday.");
    expect(html).toContain("Horizon is at least 1 week.");
    expect(html).toContain("Fairness share is at most 1.");
  });

  it("solve in the background, report progress and show result, bound, gap and the plan", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const id = await startRun(client, { ...RUN, label: "it-basic" });
    const row = await k()("allocation_runs").where({ id }).first();
    expect(["queued", "running", "done"]).toContain(row.status);
    const s = await waitDone(client, id);
    expect(s.status).toBe("done");
    expect(s.fraction).toBe(1);
    const stored = await k()("allocation_runs").where({ id }).first();
    const plan = JSON.parse(stored.result);
    const problem = JSON.parse(stored.problem).problem;
    expect(plan.bound).toBeGreaterThanOrEqual(plan.objective - 1e-9);
    // objective = Σ priority of workers made ready (docs/methods.md), recomputed from the snapshot
    const prio = new Map(problem.workers.map((w: { id: string; priority: number }) => [w.id, w.priority]));
    expect(plan.objective).toBeCloseTo(
      plan.assignments.reduce((t: number, a: { workerId: string }) => t + (prio.get(a.workerId) as number), 0),
      9,
    );
    // pool: only workers with planning consent in force and a forecast from an approved model
    for (const w of problem.workers) {
      const consent = await k()("consent_records")
        .where({ worker_id: Number(w.id), purpose: "planning" })
        .orderBy("id", "desc")
        .first();
      expect(consent?.status).toBe("given");
      const f = await k()("forecasts as f")
        .join("model_versions as m", "m.id", "f.model_version_id")
        .where({ "f.worker_id": Number(w.id), "m.status": "approved" })
        .first("f.id");
      expect(f).toBeDefined();
    }
    // The run plans at the organisation's planning quantile, the one setting (docs/methods.md): stored with the
    // run, used for the hours needed and shown read-only.
    const org = await k()("organisations").first("planning_quantile");
    expect(JSON.parse(stored.parameters).planningQuantile).toBe(Number(org.planning_quantile));
    expect(JSON.parse(stored.problem).planningQuantile).toBe(Number(org.planning_quantile));
    const html = await (await client.request(`/coordinate/runs/${id}`)).text();
    expect(pageText(html)).toContain("planning figure: the 80th percentile");
    const form = await (await client.request("/coordinate/runs")).text();
    expect(form).not.toContain('name="planningQuantile"');
    expect(pageText(form)).toContain(
      "Hours needed = the 80th percentile of each worker's forecast: the organisation's setting, used by every run",
    );
    expect(pageText(form)).toContain("An assessor changes it under Forecast models.");
    expect(html).toContain("Proven bound");
    expect(html).toContain('data-testid="plan-table"');
    expect(html).toContain("Safety cautions for wearable devices");
    expect(html).not.toMatch(/z-score|zScore/i);
  });
});

describe("publishing", () => {
  it("creates sessions inside working hours and bookable hours, e-mails .ics files, and one of two simultaneous publishes wins", async () => {
    const a = await signIn(PERSONA.coordinator);
    const b = await signIn(PERSONA.coordinator);
    const id = await startRun(a.client, { ...RUN, label: "it-publish" });
    expect((await waitDone(a.client, id)).status).toBe("done");
    const version = await planVersionOnPage(a.client, id);
    const mailBefore = readOutbox(inject("outboxDir")).length;

    const [r1, r2] = await Promise.all([
      a.client.postForm(`/coordinate/runs/${id}`, {
        intent: "publish",
        expectedPlanVersion: String(version),
        confirm: "yes",
      }),
      b.client.postForm(`/coordinate/runs/${id}`, {
        intent: "publish",
        expectedPlanVersion: String(version),
        confirm: "yes",
      }),
    ]);
    const statuses = [r1.status, r2.status].sort();
    expect(statuses).toEqual([200, 409]);
    const loser = r1.status === 409 ? r1 : r2;
    expect(await loser.text()).toContain("Someone else published first");
    const state = await k()("published_plan_state").where({ id: 1 }).first();
    expect(state.version).toBe(version + 1);
    expect(state.current_run_id).toBe(id);

    const rows = await sessionsOf(id);
    expect(rows.length).toBeGreaterThan(0);
    await checkSessions(rows);
    // the demo closes every site on 25–26 December and 1 January, inside this run's horizon: the run plans
    // around them (sessions before and after, none on them)
    const closed = await k()("site_closures")
      .where("starts_on", "<=", "2026-12-25")
      .where("ends_on", ">=", "2026-12-25");
    expect(closed.length).toBeGreaterThan(0);
    const days = rows.map((r) => r.scheduled_start.slice(0, 10));
    expect(days.filter((d) => ["2026-12-25", "2026-12-26", "2027-01-01"].includes(d))).toEqual([]);
    expect(days.some((d) => d > "2027-01-01")).toBe(true);

    // every worker and trainer with sessions gets one e-mail with a calendar file
    const fresh = readOutbox(inject("outboxDir")).slice(mailBefore);
    const workers = await k()("workers")
      .whereIn("id", [...new Set(rows.map((r) => r.worker_id))])
      .select("email");
    for (const w of workers) {
      const m = fresh.filter((x) => x.to.includes(w.email));
      expect(m.length, `one e-mail to ${w.email}`).toBe(1);
      const ics = m[0].attachments.find((x) => x.filename.endsWith(".ics"));
      expect(ics).toBeDefined();
      const text = Buffer.from(ics!.content, "base64").toString("utf8");
      expect(text).toContain("BEGIN:VCALENDAR");
    }
    // the calendar file holds exactly that worker's sessions
    const one = rows[0];
    const w1 = await k()("workers").where({ id: one.worker_id }).first("email");
    const icsText = Buffer.from(fresh.find((x) => x.to.includes(w1.email))!.attachments[0].content, "base64").toString(
      "utf8",
    );
    expect((icsText.match(/BEGIN:VEVENT/g) ?? []).length).toBe(
      rows.filter((r) => r.worker_id === one.worker_id).length,
    );
    const [d, t] = one.scheduled_start.split("T");
    const zone = (
      await k()("workers as w")
        .join("sites as s", "s.id", "w.site_id")
        .where("w.id", one.worker_id)
        .first("s.time_zone")
    ).time_zone;
    const digits = `${d.replace(/-/g, "")}T${t.replace(/:/g, "").slice(0, 6)}`;
    expect(icsText).toContain(zone === "UTC" ? `DTSTART:${digits}Z` : `DTSTART;TZID=${zone}:${digits}`);
    const trainerEmails = await k()("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .whereIn("t.id", [...new Set(rows.map((r) => r.trainer_id))])
      .select("u.email");
    for (const te of trainerEmails)
      expect(
        fresh.some((x) => x.to.includes(te.email) && x.attachments.some((at) => at.filename.endsWith(".ics"))),
      ).toBe(true);

    // XLSX schedule export
    const x = await a.client.request("/coordinate/schedule.xlsx");
    expect(x.status).toBe(200);
    expect(x.headers.get("Content-Type")).toContain("spreadsheetml");
    expect(
      Buffer.from(await x.arrayBuffer())
        .subarray(0, 2)
        .toString(),
    ).toBe("PK");
  });

  it("republishing notifies only the people whose sessions changed", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const state = await k()("published_plan_state").where({ id: 1 }).first();
    const before = await sessionsOf(state.current_run_id);
    expect(before.length).toBeGreaterThan(0);
    // what-if: one trainer who has sessions is away
    const away = before[0].trainer_id;
    const id = await startRun(client, { ...RUN, label: "it-republish", removeTrainerIds: [String(away)] });
    expect((await waitDone(client, id)).status).toBe("done");
    const version = await planVersionOnPage(client, id);
    const mailBefore = readOutbox(inject("outboxDir")).length;
    const res = await client.postForm(`/coordinate/runs/${id}`, {
      intent: "publish",
      expectedPlanVersion: String(version),
      confirm: "yes",
    });
    expect(res.status).toBe(200);
    const after = await sessionsOf(id);
    await checkSessions(after);
    expect(after.some((r) => r.trainer_id === away)).toBe(false);
    expect(await sessionsOf(state.current_run_id)).toHaveLength(0);

    const fb = fingerprints(before);
    const fa = fingerprints(after);
    const workerEmails = new Map(
      (await k()("workers").select("id", "email")).map((w) => [w.id as number, w.email as string]),
    );
    const trainerEmails = new Map(
      (await k()("trainers as t").join("users as u", "u.id", "t.user_id").select("t.id", "u.email")).map((t) => [
        t.id as number,
        t.email as string,
      ]),
    );
    const expected = new Set([
      ...changedIds(fb.worker, fa.worker).map((i) => workerEmails.get(i)!),
      ...changedIds(fb.trainer, fa.trainer).map((i) => trainerEmails.get(i)!),
    ]);
    expect(expected.has(trainerEmails.get(away)!)).toBe(true);
    const fresh = readOutbox(inject("outboxDir")).slice(mailBefore);
    const got = new Set(fresh.flatMap((m) => m.to));
    expect([...got].sort()).toEqual([...expected].sort());
    const cancelled = fresh.find((m) => m.to.includes(trainerEmails.get(away)!))!;
    expect(cancelled.subject).toContain("cancelled");
    expect(Buffer.from(cancelled.attachments[0].content, "base64").toString()).toContain("METHOD:CANCEL");

    // publishing the same plan again changes nobody's sessions: nobody is e-mailed
    const v2 = await planVersionOnPage(client, id);
    const mid = readOutbox(inject("outboxDir")).length;
    expect(
      (
        await client.postForm(`/coordinate/runs/${id}`, {
          intent: "publish",
          expectedPlanVersion: String(v2),
          confirm: "yes",
        })
      ).status,
    ).toBe(200);
    await new Promise((r) => setTimeout(r, 300));
    expect(readOutbox(inject("outboxDir")).slice(mid)).toHaveLength(0);
  });

  it("refuses to publish a run whose sessions fall on a closure added after it, and publishes nothing", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const id = await startRun(client, { ...RUN, label: "it-closed-later" });
    expect((await waitDone(client, id)).status).toBe("done");
    const version = await planVersionOnPage(client, id);
    // the admin closes every site for the run's whole horizon through the calendar page
    const admin = (await signIn(PERSONA.admin)).client;
    const added: number[] = [];
    try {
      for (const site of await k()("sites").select("id")) {
        const res = await admin.postForm(`/admin/sites/${site.id}/calendar`, {
          intent: "closure",
          startsOn: "2026-12-07",
          endsOn: "2027-01-17",
          reason: "Flood repairs (test)",
        });
        expect(res.status).toBe(200);
        added.push(
          ...(await k()("site_closures").where({ site_id: site.id, reason: "Flood repairs (test)" }).pluck("id")),
        );
      }
      const res = await client.postForm(`/coordinate/runs/${id}`, {
        intent: "publish",
        expectedPlanVersion: String(version),
        confirm: "yes",
      });
      expect(res.status).toBe(400);
      const html = await res.text();
      expect(html).toContain("break the session rules as they stand now");
      expect(html).toContain("is closed (Flood repairs (test))");
      expect((await k()("published_plan_state").where({ id: 1 }).first()).version).toBe(version);
      expect(await sessionsOf(id)).toHaveLength(0);
    } finally {
      await k()("site_closures").whereIn("id", added.concat(-1)).del();
    }
  });

  it("refuses to publish a what-if run with units that do not exist, and non-coordinators cannot publish", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const dt = await k()("device_types").where({ code: "EXO-BACK" }).first("id");
    const site = await k()("sites").where({ code: "EG" }).first("id");
    const id = await startRun(client, {
      ...RUN,
      label: "it-add-unit",
      addUnitDeviceTypeId: String(dt.id),
      addUnitSiteId: String(site.id),
      addUnitCount: "2",
    });
    expect((await waitDone(client, id)).status).toBe("done");
    const html = await (await client.request(`/coordinate/runs/${id}`)).text();
    expect(html).toContain("cannot be published");
    const version = (await k()("published_plan_state").where({ id: 1 }).first()).version;
    const res = await client.postForm(`/coordinate/runs/${id}`, {
      intent: "publish",
      expectedPlanVersion: String(version),
      confirm: "yes",
    });
    expect(res.status).toBe(400);
    const assessor = await signIn(PERSONA.assessor);
    expect(
      (
        await assessor.client.postForm(`/coordinate/runs/${id}`, {
          intent: "publish",
          expectedPlanVersion: String(version),
          confirm: "yes",
        })
      ).status,
    ).toBe(403);
    expect((await k()("published_plan_state").where({ id: 1 }).first()).version).toBe(version);
  });
});

describe("API /api/v1/allocation-runs", () => {
  const makeKey = async (role: string, siteCodes: string[]) => {
    const prefix = crypto.randomBytes(6).toString("hex");
    const secret = crypto.randomBytes(32).toString("base64url");
    const [row] = await k()("api_keys")
      .insert({
        name: `alloc-it-${role}-${prefix}`,
        prefix,
        secret_hash: crypto.createHash("sha256").update(secret).digest("hex"),
        role,
        created_at: new Date().toISOString(),
      })
      .returning("id");
    for (const code of siteCodes) {
      const s = await k()("sites").where({ code }).first("id");
      await k()("api_key_sites").insert({ api_key_id: row.id, site_id: s.id });
    }
    return `lbk_${prefix}_${secret}`;
  };
  const post = (key: string | null, body: unknown) =>
    fetch(`${baseUrl()}/api/v1/allocation-runs`, {
      method: "POST",
      headers: { "Content-Type": "application/json", ...(key ? { Authorization: `Bearer ${key}` } : {}) },
      body: JSON.stringify(body),
    });
  const params = { startDate: "2026-12-07", horizonWeeks: 4, fairnessShare: 0.2 };

  it("starts a run for a coordinator key and reports its status and result", async () => {
    const key = await makeKey("coordinator", ["NY"]);
    const res = await post(key, params);
    expect(res.status).toBe(202);
    const { id } = await res.json();
    let body: {
      status?: string;
      error?: string | null;
      attempts?: number;
      parameters: { pool: { siteIds: number[] } };
      result: { bound: number; objective: number; assignments: { workerId: number }[] };
    } = { parameters: { pool: { siteIds: [] } }, result: { bound: 0, objective: 0, assignments: [] } };
    for (let i = 0; i < 600; i++) {
      body = await (
        await fetch(`${baseUrl()}/api/v1/allocation-runs/${id}`, { headers: { Authorization: `Bearer ${key}` } })
      ).json();
      if (body.status === "done" || body.status === "failed") break;
      await new Promise((r) => setTimeout(r, 100));
    }
    expect(body.status).toBe("done");
    expect(body.error).toBeNull();
    expect(body.attempts).toBe(1); // claimed once, by the one server of the test stack
    const ny = await k()("sites").where({ code: "NY" }).first("id");
    expect(body.parameters.pool.siteIds).toEqual([ny.id]);
    expect(body.result.bound).toBeGreaterThanOrEqual(body.result.objective);
    for (const a of body.result.assignments) {
      const w = await k()("workers").where({ id: a.workerId }).first("site_id");
      expect(w.site_id).toBe(ny.id);
    }
  });

  it("validates the body with the form's schema and names the field", async () => {
    const key = await makeKey("coordinator", ["NY"]);
    const res = await post(key, { ...params, startDate: "2026-12-09", fairnessShare: 3 });
    expect(res.status).toBe(400);
    const body = await res.json();
    expect(body.fields.startDate).toBe("The start date must be a Monday.");
    expect(body.fields.fairnessShare).toBe("Fairness share is at most 1.");
    // The planning quantile is the organisation's setting, not a run parameter: a body naming it is refused.
    const before = await k()("allocation_runs").count({ n: "*" }).first();
    const own = await post(key, { ...params, planningQuantile: 0.9 });
    expect(own.status).toBe(400);
    expect((await own.json()).fields.planningQuantile).toBe(
      "Planning quantile: runs use the organisation's planning percentile, set by an assessor under Forecast models; leave it out.",
    );
    expect(await k()("allocation_runs").count({ n: "*" }).first()).toEqual(before);
  });

  it("refuses non-coordinator keys (403) and anonymous callers (401)", async () => {
    for (const role of ["assessor", "trainer", "manager", "worker", "admin"]) {
      const key = await makeKey(role, ["NY"]);
      expect((await post(key, params)).status, role).toBe(403);
      expect(
        (await fetch(`${baseUrl()}/api/v1/allocation-runs/1`, { headers: { Authorization: `Bearer ${key}` } })).status,
        role,
      ).toBe(403);
    }
    expect((await post(null, params)).status).toBe(401);
    // a coordinator key for another site does not see this site's runs
    const started = await post(await makeKey("coordinator", ["NY"]), params);
    expect(started.status).toBe(202);
    const { id } = await started.json();
    const rsKey = await makeKey("coordinator", ["RS"]);
    expect(
      (await fetch(`${baseUrl()}/api/v1/allocation-runs/${id}`, { headers: { Authorization: `Bearer ${rsKey}` } }))
        .status,
    ).toBe(404);
  });
});

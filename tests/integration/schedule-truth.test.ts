import ExcelJS from "exceljs";
import { describe, expect, inject, it } from "vitest";
import { dayAndWeekIn, instantToWallClock } from "~/dates";
import { readOutbox } from "../../scripts/smtp-catcher";
import { type Browserless, PERSONA, runFinished, signIn, testDb } from "./helpers";

// One schedule and an honest publish step, against the real built server and the seeded demo: workers already
// in training enter a new run as fixed commitments; publishing needs a confirmation (without it nothing is
// written and nobody is e-mailed); with it exactly the people the page counted are e-mailed (SMTP catcher),
// and the page's ready count equals the workers whose every planned hour got a session (recounted here from
// the stored plan and the written sessions). Then one worker's published sessions are read on every page,
// export and API and compared with the database rows (read here with plain SQL, not the app's reader).

const k = () => testDb();
const RUN = { startDate: "2026-12-07", horizonWeeks: "6", fairnessShare: "0" };

async function startRun(client: Browserless, fields: Record<string, string>): Promise<number> {
  const res = await client.postForm("/coordinate/runs", fields);
  expect(res.status).toBe(302);
  const m = /\/coordinate\/runs\/(\d+)$/.exec(res.headers.get("Location") ?? "");
  expect(m).not.toBeNull();
  return Number(m![1]);
}

const waitDone = async (client: Browserless, id: number) => (await runFinished(client, id)).status;

const testIdNumber = (html: string, id: string) => {
  const m = new RegExp(`data-testid="${id}"[^>]*>(\\d+)<`).exec(html);
  expect(m, `the page shows ${id}`).not.toBeNull();
  return Number(m![1]);
};
const sessionIds = (html: string) => [...html.matchAll(/data-session-id="(\d+)"/g)].map((m) => Number(m[1]));
const minutesBetween = (a: string, b: string) =>
  (Date.parse(`${b.slice(0, 19)}Z`) - Date.parse(`${a.slice(0, 19)}Z`)) / 60_000;

let runId = 0;

describe("a new run and its publish step", () => {
  it("carries workers already in training as fixed commitments with their remaining hours", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    runId = await startRun(client, { ...RUN, label: "it-truth" });
    expect(await waitDone(client, runId)).toBe("done");
    const stored = await k()("allocation_runs").where({ id: runId }).first("problem");
    const snap = JSON.parse(stored.problem);
    const amara = await k()("workers").where({ employee_number: "HV-00001" }).first("id");
    const course = await k()("device_courses").where({ worker_id: amara.id, status: "training" }).first();
    expect(course, "the demo has Amara Quist in training").toBeDefined();
    const mine = snap.commitments.find((c: { workerId: string }) => c.workerId === String(amara.id));
    expect(mine, "she is a commitment of the run").toBeDefined();
    expect(mine.hoursBooked).toBeGreaterThan(0);
    expect(snap.problem.workers.some((w: { id: string }) => w.id === String(amara.id))).toBe(false);
    expect(snap.excluded.some((e: { reason: string }) => /already in training/i.test(e.reason))).toBe(false);
    // every worker with a course in training, planning consent and an approved forecast is carried
    const inTraining = await k()("device_courses as c")
      .join("workers as w", "w.id", "c.worker_id")
      .where("c.status", "training")
      .whereExists(
        k()("consent_records as r")
          .whereRaw("r.worker_id = w.id")
          .where("r.purpose", "planning")
          .where("r.status", "given")
          .whereRaw(
            "r.id = (select max(r2.id) from consent_records r2 where r2.worker_id = w.id and r2.purpose = 'planning')",
          ),
      )
      .whereExists(
        k()("forecasts as f")
          .join("model_versions as m", "m.id", "f.model_version_id")
          .whereRaw("f.worker_id = w.id and f.device_type_id = c.device_type_id")
          .where("m.status", "approved"),
      )
      .distinct("w.id");
    expect(new Set(snap.commitments.map((c: { workerId: string }) => Number(c.workerId)))).toEqual(
      new Set(inTraining.map((r) => r.id)),
    );
  });

  it("publishes nothing without the confirmation, then e-mails exactly the counted people; ready = fully placed", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const html = await (await client.request(`/coordinate/runs/${runId}`)).text();
    const version = Number(/name="expectedPlanVersion" value="(\d+)"/.exec(html)![1]);
    const ready = testIdNumber(html, "ready-after-placement");
    const toMail = testIdNumber(html, "will-be-emailed");
    expect(html).toContain('name="confirm"');

    const sessionsBefore = await k()("training_sessions").orderBy("id").select("id", "status", "scheduled_start");
    const mailBefore = readOutbox(inject("outboxDir")).length;
    const refused = await client.postForm(`/coordinate/runs/${runId}`, {
      intent: "publish",
      expectedPlanVersion: String(version),
    });
    expect(refused.status).toBe(400);
    expect(await refused.text()).toContain("Tick the box to confirm");
    expect((await k()("published_plan_state").where({ id: 1 }).first()).version).toBe(version);
    expect((await k()("allocation_runs").where({ id: runId }).first("published_at")).published_at).toBeNull();
    expect(await k()("training_sessions").orderBy("id").select("id", "status", "scheduled_start")).toEqual(
      sessionsBefore,
    );
    expect(readOutbox(inject("outboxDir")).length).toBe(mailBefore);

    const ok = await client.postForm(`/coordinate/runs/${runId}`, {
      intent: "publish",
      expectedPlanVersion: String(version),
      confirm: "yes",
    });
    expect(ok.status).toBe(200);
    expect(await ok.text()).toContain('href="/coordinate/schedule"');
    expect((await k()("published_plan_state").where({ id: 1 }).first()).version).toBe(version + 1);
    const fresh = readOutbox(inject("outboxDir")).slice(mailBefore);
    const recipients = new Set(fresh.flatMap((m) => m.to));
    expect(fresh.length).toBe(toMail);
    expect(recipients.size).toBe(toMail);

    // Ready after placement, recounted: a worker of the weekly plan is ready when the minutes written for them
    // equal the minutes the plan gave them (each weekly block rounded to whole minutes, as the plan is booked).
    const plan = JSON.parse((await k()("allocation_runs").where({ id: runId }).first("result")).result);
    const written = await k()("training_sessions")
      .where({ allocation_run_id: runId, status: "scheduled" })
      .select("worker_id", "scheduled_start", "scheduled_end");
    const got = new Map<number, number>();
    for (const s of written)
      got.set(s.worker_id, (got.get(s.worker_id) ?? 0) + minutesBetween(s.scheduled_start, s.scheduled_end));
    const fullyPlaced = plan.assignments.filter(
      (a: { workerId: string; sessions: { hours: number }[] }) =>
        (got.get(Number(a.workerId)) ?? 0) >=
        a.sessions.reduce((m: number, s: { hours: number }) => m + Math.round(s.hours * 60), 0),
    );
    expect(ready).toBe(fullyPlaced.length);
    // the runs list shows the same count over the pool, and the value = Σ priority of those ready
    const problem = JSON.parse((await k()("allocation_runs").where({ id: runId }).first("problem")).problem).problem;
    const list = await (await client.request("/coordinate/runs")).text();
    expect(list).toMatch(new RegExp(`data-testid="run-ready-${runId}"[^>]*>${ready} / ${problem.workers.length}<`));
    const prio = new Map(problem.workers.map((w: { id: string; priority: number }) => [w.id, w.priority]));
    const value = fullyPlaced.reduce((s: number, a: { workerId: string }) => s + (prio.get(a.workerId) as number), 0);
    expect(list).toMatch(new RegExp(`data-testid="run-value-${runId}"[^>]*>${Math.round(value * 100) / 100}<`));
  });
});

describe("one schedule", () => {
  it("reads the same published sessions on every page, export and API", async () => {
    const amara = await k()("workers as w")
      .join("sites as s", "s.id", "w.site_id")
      .where("w.employee_number", "HV-00001")
      .first("w.id", "s.time_zone");
    const ines = await k()("trainers as t")
      .join("users as u", "u.id", "t.user_id")
      .where("u.email", PERSONA.trainer)
      .first("t.id");
    const nowWall = instantToWallClock(new Date(), amara.time_zone);
    // The truth: scheduled sessions starting from now on the site's clock, straight from the table.
    const truth = await k()("training_sessions")
      .where({ worker_id: amara.id, status: "scheduled" })
      .where("scheduled_start", ">=", nowWall)
      .orderBy(["scheduled_start", "id"])
      .select("id", "scheduled_start", "scheduled_end");
    expect(truth.length, "Amara has upcoming sessions after the publish").toBeGreaterThan(0);
    expect(truth.some((t) => t.scheduled_start >= "2026-12-07")).toBe(true);
    const ids = truth.map((t) => t.id as number);
    const spans = truth.map(
      (t) => `${String(t.scheduled_start).slice(0, 16)}–${String(t.scheduled_end).slice(11, 16)}`,
    );

    const coordinator = (await signIn(PERSONA.coordinator)).client;
    // coordinator's trainee page
    const trainee = await (await coordinator.request(`/coordinate/trainees/${amara.id}`)).text();
    expect(sessionIds(trainee)).toEqual(ids);
    expect(trainee).not.toContain("None in the published plan");
    // coordinator's trainer page: Amara's sessions with Ines
    const trainerPage = await (await coordinator.request(`/coordinate/trainers/${ines.id}`)).text();
    const inesTruth = await k()("training_sessions")
      .where({ trainer_id: ines.id, status: "scheduled" })
      .where("scheduled_start", ">=", nowWall)
      .orderBy("id")
      .pluck("id");
    expect(sessionIds(trainerPage).sort((a, b) => a - b)).toEqual(inesTruth);
    // schedule page
    const schedulePage = await (await coordinator.request("/coordinate/schedule")).text();
    for (const id of ids) expect(sessionIds(schedulePage)).toContain(id);
    // XLSX export, read back
    const x = await coordinator.request("/coordinate/schedule.xlsx");
    expect(x.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(Buffer.from(await x.arrayBuffer()) as unknown as ArrayBuffer);
    const sheet = wb.getWorksheet("Schedule")!;
    const header = (sheet.getRow(1).values as unknown[]).map(String);
    const col = (name: string) => header.indexOf(name);
    const xlsx: string[] = [];
    sheet.eachRow((row, n) => {
      if (n === 1) return;
      const v = row.values as unknown[];
      if (v[col("Employee number")] === "HV-00001") xlsx.push(`${v[col("Date")]}T${v[col("Start")]}–${v[col("End")]}`);
    });
    expect(xlsx).toEqual(spans);

    // trainer's day (this week, on the site's clock): every upcoming scheduled session of Ines this week is there
    const trainer = (await signIn(PERSONA.trainer)).client;
    const day = await (await trainer.request("/train")).text();
    const dayIds = [...day.matchAll(/data-testid="session-(\d+)"/g)].map((m) => Number(m[1]));
    const { weekEnd } = dayAndWeekIn(amara.time_zone, new Date());
    const thisWeek = await k()("training_sessions")
      .where({ trainer_id: ines.id, status: "scheduled" })
      .where("scheduled_start", ">=", nowWall)
      .where("scheduled_start", "<", weekEnd)
      .pluck("id");
    for (const id of thisWeek) expect(dayIds).toContain(id);

    // the worker's own page (next eight), calendar file and API
    const worker = (await signIn(PERSONA.worker)).client;
    const me = await (await worker.request("/me")).text();
    expect(sessionIds(me)).toEqual(ids.slice(0, 8));
    const ics = await (await worker.request("/me/calendar.ics")).text();
    const icsStarts = [...ics.matchAll(/DTSTART(?:;TZID=[^:]+)?:(\d{8}T\d{4})/g)]
      .map(
        (m) => `${m[1].slice(0, 4)}-${m[1].slice(4, 6)}-${m[1].slice(6, 8)}T${m[1].slice(9, 11)}:${m[1].slice(11, 13)}`,
      )
      .filter((s) => s >= nowWall.slice(0, 16));
    expect(icsStarts).toEqual(truth.map((t) => String(t.scheduled_start).slice(0, 16)));
    const api = await (await worker.request("/api/v1/me/plan")).json();
    expect(api.sessions.map((s: { id: number }) => s.id)).toEqual(ids);
  });
});

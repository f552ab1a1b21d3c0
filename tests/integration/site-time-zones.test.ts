import ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { addDays, todayIn, wallClockToInstant, weekStart } from "~/dates";
import { trainerDay } from "~/models/trainer-day.server";
import { PERSONA, signIn, testDb } from "./helpers";

// One site on Europe/Berlin: a session planned for 09:00 on that site's clock reads 09:00 on the trainer's day,
// in the worker's plan, in the XLSX schedule and in the .ics (TZID=Europe/Berlin); "today" follows the site's
// clock. The site's zone is set through the admin page and put back afterwards.
const k = testDb();
let RUN_ID = 0; // the published run this file inserts (id from the database: fixed ids collide with runs other files create)
const BERLIN = "Europe/Berlin";
let siteId: number;
let originalZone: string;
let trainerId: number;
let workerId: number;
let sessionId: number;
// A Monday at least two weeks ahead on the Berlin clock, so the session is upcoming whatever the day of the run.
let day: string;

beforeAll(async () => {
  const amara = await k("workers").where({ employee_number: "HV-00001" }).first("id", "site_id");
  workerId = amara.id;
  siteId = amara.site_id;
  originalZone = (await k("sites").where({ id: siteId }).first("time_zone")).time_zone;
  const ines = await k("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .where("u.email", PERSONA.trainer)
    .first("t.id", "t.site_id");
  trainerId = ines.id;
  expect(ines.site_id, "the demo trains Amara at her own site").toBe(siteId);
  const course = await k("device_courses").where({ worker_id: workerId }).orderBy("device_type_id").first();
  day = addDays(weekStart(todayIn(BERLIN)), 14);
  const [run] = await k("allocation_runs")
    .insert({
      label: "site time zone test plan",
      parameters: JSON.stringify({ pool: { siteIds: [siteId], departmentIds: [] } }),
      status: "done",
      created_at: "2026-12-01T00:00:00.000Z",
      published_at: "2026-12-01T00:00:00.000Z",
    })
    .returning("id");
  RUN_ID = typeof run === "object" ? run.id : run;
  const [row] = await k("training_sessions")
    .insert({
      worker_id: workerId,
      device_type_id: course.device_type_id,
      trainer_id: trainerId,
      allocation_run_id: RUN_ID,
      scheduled_start: `${day}T09:00:00`,
      scheduled_end: `${day}T10:00:00`,
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");
  sessionId = row.id;
});

afterAll(async () => {
  await k("training_sessions").where({ allocation_run_id: RUN_ID }).delete();
  await k("allocation_runs").where({ id: RUN_ID }).delete();
  await k("sites").where({ id: siteId }).update({ time_zone: originalZone });
});

describe("site time zones", () => {
  it("an admin sets a site's zone; a name that is not an IANA zone is refused with the field named", async () => {
    const { client } = await signIn(PERSONA.admin);
    const bad = await client.postForm("/admin/sites", {
      intent: "siteZone",
      siteId: String(siteId),
      timeZone: "Mars/Olympus",
    });
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain("Time zone: choose a zone name from the list");
    expect((await k("sites").where({ id: siteId }).first("time_zone")).time_zone).toBe(originalZone);
    const ok = await client.postForm("/admin/sites", { intent: "siteZone", siteId: String(siteId), timeZone: BERLIN });
    expect(ok.status).toBe(200);
    expect((await k("sites").where({ id: siteId }).first("time_zone")).time_zone).toBe(BERLIN);
    expect(await (await client.request("/admin/sites")).text()).toContain(`value="${BERLIN}"`);
  });

  it("a 09:00 session reads 09:00 on the trainer's day, the worker's plan, the XLSX schedule and the .ics", async () => {
    // Trainer: the session page and the log form's default times.
    const { client: trainer } = await signIn(PERSONA.trainer);
    const page = (await (await trainer.request(`/train/sessions/${sessionId}`)).text()).replace(/<!-- -->/g, "");
    expect(page).toContain("09:00–10:00");
    expect(page).toContain(`${BERLIN} time`);
    expect(page).toContain(`value="${day}T09:00"`);

    // Worker: the plan API gives the site's wall-clock time and names the zone.
    const { client: worker } = await signIn(PERSONA.worker);
    const plan = await (await worker.request("/api/v1/me/plan")).json();
    const mine = plan.sessions.find((s: { id: number }) => s.id === sessionId);
    expect(mine).toMatchObject({ start: `${day}T09:00:00`, end: `${day}T10:00:00`, timeZone: BERLIN });

    // Worker: the home page says whose clock the times are on.
    expect((await (await worker.request("/me")).text()).replace(/<!-- -->/g, "")).toContain(`Times are ${BERLIN} time`);

    // Worker: the calendar file names the zone; the wall-clock digits are unchanged.
    const ics = await (await worker.request("/me/calendar.ics")).text();
    const compact = day.replace(/-/g, "");
    expect(ics).toContain(`DTSTART;TZID=${BERLIN}:${compact}T090000`);
    expect(ics).toContain(`DTEND;TZID=${BERLIN}:${compact}T100000`);
    expect(ics).not.toContain(`DTSTART:${compact}T090000`);
    expect(ics).toContain(`BEGIN:VTIMEZONE\r\nTZID:${BERLIN}\r\n`);

    // Coordinator: the XLSX schedule row says 09:00 and names the zone.
    const { client: coordinator } = await signIn(PERSONA.coordinator);
    const res = await coordinator.request("/coordinate/schedule.xlsx");
    expect(res.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(await res.arrayBuffer());
    const ws = wb.getWorksheet("Schedule")!;
    const header = (ws.getRow(1).values as unknown[]).map(String);
    const col = (name: string) => header.indexOf(name);
    const rows: unknown[][] = [];
    ws.eachRow((r, i) => {
      if (i > 1) rows.push(r.values as unknown[]);
    });
    // The row of this file's session: its run (other sessions of the same worker may share the day).
    const ours = rows.find((r) => r[col("Run")] === RUN_ID && r[col("Date")] === day);
    expect(ours, "the test session is in the schedule").toBeDefined();
    expect(ours![col("Start")]).toBe("09:00");
    expect(ours![col("End")]).toBe("10:00");
    expect(ours![col("Time zone")]).toBe(BERLIN);
  });

  it("'today' on the trainer's day follows the site's clock near midnight UTC", async () => {
    // 23:30 UTC the evening before is 00:30 on the session's day in Berlin (UTC+1 in winter, +2 in summer:
    // IANA tz database), so the session is today there.
    const justAfterMidnight = wallClockToInstant(`${day}T00:30:00`, BERLIN);
    const berlin = await trainerDay(trainerId, justAfterMidnight, k);
    expect(berlin.timeZone).toBe(BERLIN);
    expect(berlin.date).toBe(day);
    expect(berlin.today.map((s) => s.id)).toContain(sessionId);
    expect(berlin.today.find((s) => s.id === sessionId)?.start).toBe(`${day}T09:00:00`);
    // Half an hour earlier it is still the Sunday before on the Berlin clock: another week, not today.
    const justBefore = wallClockToInstant(`${addDays(day, -1)}T23:30:00`, BERLIN);
    const sunday = await trainerDay(trainerId, justBefore, k);
    expect(sunday.date).toBe(addDays(day, -1));
    expect([...sunday.today, ...sunday.rest].map((s) => s.id)).not.toContain(sessionId);
    // With the site on UTC the same instant as the first check is still the evening before.
    await k("sites").where({ id: siteId }).update({ time_zone: "UTC" });
    try {
      const utc = await trainerDay(trainerId, justAfterMidnight, k);
      expect(utc.date).toBe(addDays(day, -1));
      expect(utc.today.map((s) => s.id)).not.toContain(sessionId);
    } finally {
      await k("sites").where({ id: siteId }).update({ time_zone: BERLIN });
    }
  });

  it("a log at a wall-clock time that does not exist in the site's zone is refused with the field named", async () => {
    // IANA tz database: Berlin's clocks go from 02:00 to 03:00 on Sunday 28 March 2027, so 02:30 never happens.
    const { client } = await signIn(PERSONA.trainer);
    const res = await client.postForm(`/train/sessions/${sessionId}`, {
      intent: "log",
      start: "2027-03-28T02:30",
      end: "2027-03-28T03:15",
      taskScore: "0.5",
    });
    expect(res.status).toBe(409);
    expect((await res.text()).replace(/<!-- -->/g, "")).toContain(
      "Start: 02:30 does not exist on 2027-03-28 in Europe/Berlin",
    );
    expect((await k("training_sessions").where({ id: sessionId }).first("status")).status).toBe("scheduled");
  });
});

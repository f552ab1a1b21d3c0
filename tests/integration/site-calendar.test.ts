import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { buildProblem } from "~/models/allocation-problem.server";
import { runParametersSchema } from "~/schemas/allocation";
import { RFC5545_EXAMPLES } from "../reference/rfc5545-examples";
import { type Browserless, PERSONA, pageText, signIn, testDb } from "./helpers";

// A site's working hours and closures through the admin's own page on the running app: typed in, imported
// from an .ics file (the RFC 5545 section 3.6.1 examples), refused with the problem named and nothing saved,
// and out of reach of other roles. The test works on a site of its own, so the demo's plans are untouched.
const k = testDb();
let siteId: number;
let admin: Browserless;
const path = () => `/admin/sites/${siteId}/calendar`;
const closures = () => k("site_closures").where({ site_id: siteId }).orderBy(["starts_on", "id"]);
const hours = () => k("site_working_hours").where({ site_id: siteId }).orderBy("weekday");

function upload(client: Browserless, name: string, text: string | Uint8Array<ArrayBuffer>) {
  const fd = new FormData();
  fd.append("intent", "import-ics");
  fd.append("ics", new Blob([text], { type: "text/calendar" }), name);
  return client.request(path(), { method: "POST", body: fd });
}

beforeAll(async () => {
  const org = await k("organisations").orderBy("id").first("id");
  [{ id: siteId }] = await k("sites")
    .insert({
      organisation_id: org.id,
      code: "IT-CAL",
      name: "Calendar test site",
      time_zone: "Europe/London",
      created_at: new Date().toISOString(),
    })
    .returning("id");
  admin = (await signIn(PERSONA.admin)).client;
});
afterAll(async () => {
  await k("sites").where({ id: siteId }).del();
});

describe("a site's working hours", () => {
  it("saves a week's hours and names the weekday of a bad row, saving nothing", async () => {
    expect((await admin.request(path())).status).toBe(200);
    const bad = await admin.postForm(path(), { intent: "hours", start1: "07:00", end1: "06:00", start2: "07:00" });
    expect(bad.status).toBe(400);
    const text = pageText(await bad.text());
    expect(text).toContain("Monday: the closing time must be after the opening time.");
    expect(text).toContain("Tuesday: enter both the opening and the closing time, or neither (not worked).");
    expect(await hours()).toEqual([]);

    const ok = await admin.postForm(path(), {
      intent: "hours",
      start1: "07:00",
      end1: "15:30",
      start5: "07:00",
      end5: "12:00",
    });
    expect(ok.status).toBe(200);
    expect((await hours()).map((h) => [h.weekday, h.start_time, h.end_time])).toEqual([
      [1, "07:00", "15:30"],
      [5, "07:00", "12:00"],
    ]);
  });
});

describe("a site's closures", () => {
  it("adds a typed-in closure and refuses a last day before the first", async () => {
    const bad = await admin.postForm(path(), {
      intent: "closure",
      startsOn: "2027-08-09",
      endsOn: "2027-08-02",
      reason: "Summer shutdown",
    });
    expect(bad.status).toBe(400);
    expect(pageText(await bad.text())).toContain("Last day: on or after the first day.");
    expect(await closures()).toEqual([]);
    const ok = await admin.postForm(path(), {
      intent: "closure",
      startsOn: "2027-08-02",
      endsOn: "2027-08-13",
      reason: "Summer shutdown",
    });
    expect(ok.status).toBe(200);
    expect((await closures()).map((c) => [c.starts_on, c.ends_on, c.reason, c.source])).toEqual([
      ["2027-08-02", "2027-08-13", "Summer shutdown", "form"],
    ]);
  });

  it("refuses a bad .ics file with the problem named, and saves nothing", async () => {
    const before = (await closures()).length;
    const cases: [string, string | Uint8Array<ArrayBuffer>, RegExp, number][] = [
      ["roster.ics", "employee_number,given_name\n1,Ann\n", /Calendar file: not a readable iCalendar file/, 400],
      ["empty.ics", "BEGIN:VCALENDAR\r\nVERSION:2.0\r\nEND:VCALENDAR\r\n", /Calendar file: it holds no events/, 400],
      ["holidays.csv", RFC5545_EXAMPLES, /Calendar file: holidays.csv is not an .ics file/, 400],
      ["latin1.ics", new Uint8Array([0x42, 0x45, 0xff, 0xfe, 0x0a]), /Calendar file: it is not UTF-8 text/, 400],
      ["big.ics", "X".repeat(1024 * 1024 + 10), /Calendar file: The file is larger than 1 MB/, 413],
    ];
    for (const [name, body, message, status] of cases) {
      const res = await upload(admin, name, body);
      expect(res.status, name).toBe(status);
      expect(pageText(await res.text()), name).toMatch(message);
    }
    expect((await closures()).length).toBe(before);
  });

  it("imports the RFC 5545 examples: the all-day span, the yearly event in the next three years, the timed one skipped", async () => {
    const res = await upload(admin, "rfc5545.ics", RFC5545_EXAMPLES);
    expect(res.status).toBe(200);
    const text = pageText(await res.text());
    expect(text).toContain("1 event with a time of day skipped");
    const rows = (await closures()).filter((c) => c.source === "ics");
    // DTSTART;VALUE=DATE:20070628 to DTEND;VALUE=DATE:20070709 (exclusive): 28 June to 8 July 2007
    expect(rows.filter((c) => c.reason.startsWith("Festival")).map((c) => [c.starts_on, c.ends_on])).toEqual([
      ["2007-06-28", "2007-07-08"],
    ]);
    // FREQ=YEARLY from 2 November 1997: every 2 November from today (the site's zone) up to three years ahead
    const today = new Intl.DateTimeFormat("en-CA", { timeZone: "Europe/London" }).format(new Date());
    const last = new Date(`${today}T12:00:00Z`);
    last.setUTCDate(last.getUTCDate() + 3 * 365);
    const expected = [0, 1, 2, 3, 4]
      .map((i) => `${Number(today.slice(0, 4)) + i}-11-02`)
      .filter((d) => d >= today && d <= last.toISOString().slice(0, 10));
    expect(rows.filter((c) => c.reason === "Our Blissful Anniversary").map((c) => c.starts_on)).toEqual(expected);
    // a second import adds nothing
    const again = await upload(admin, "rfc5545.ics", RFC5545_EXAMPLES);
    expect(again.status).toBe(200);
    expect(pageText(await again.text())).toContain("0 closures imported");
    expect((await closures()).filter((c) => c.source === "ics").length).toBe(rows.length);
  });

  it("is the admin's: a coordinator is refused and nothing is saved", async () => {
    const before = (await closures()).length;
    const coordinator = (await signIn(PERSONA.coordinator)).client;
    expect((await coordinator.request(path())).status).toBe(403);
    const res = await upload(coordinator, "rfc5545.ics", RFC5545_EXAMPLES);
    expect(res.status).toBe(403);
    expect((await closures()).length).toBe(before);
  });
});

describe("the first stage plans against the same closures and hours", () => {
  it("Riverside's Christmas week has four working days and its shutdown week none (demo calendar)", async () => {
    const rs = await k("sites").where({ code: "RS" }).first("id", "name");
    const params = runParametersSchema.parse({
      startDate: "2026-12-21",
      horizonWeeks: 2,
      fairnessShare: 0,
      pool: { siteIds: [rs.id] },
    });
    const snap = await buildProblem(params, { allSites: true, siteIds: [], departmentIds: [] }, k);
    // by hand from the demo seed: Riverside works Mon–Fri 07:00–14:30 (7.5 h) and is closed on 25 December, so
    // week 0 has 4 working days: a unit gives min(bookable × 4/5, 4 × 7.5 h) unless it is in maintenance then;
    // 28–31 December (shutdown) and 1 January (holiday) close all of week 1
    const units = await k("device_units as u")
      .join("device_types as d", "d.id", "u.device_type_id")
      .where({ "u.site_id": rs.id, "u.status": "in_service" })
      .select("u.id", "u.bookable_hours_per_week", "d.name");
    const maint = await k("unit_maintenance_windows").select("device_unit_id", "starts_on", "ends_on");
    const days = ["2026-12-21", "2026-12-22", "2026-12-23", "2026-12-24"];
    for (const d of snap.problem.deviceTypes) {
      const mine = units.filter((u) => d.id.startsWith(`${u.name} at`));
      const week0 = mine.reduce((h, u) => {
        const free = days.filter(
          (x) => !maint.some((m) => m.device_unit_id === u.id && x >= m.starts_on && x <= m.ends_on),
        ).length;
        return h + Math.min((Number(u.bookable_hours_per_week) * free) / 5, free * 7.5);
      }, 0);
      // the solver sees what is left after the hours booked for workers already in training
      const committed = (snap.commitments ?? [])
        .filter((c) => c.assignment.deviceTypeId === d.id)
        .flatMap((c) => c.assignment.sessions)
        .filter((x) => x.week === 0)
        .reduce((h, x) => h + x.hours, 0);
      expect(d.hoursPerWeek[0] + committed, d.id).toBeCloseTo(week0, 1);
      expect(d.hoursPerWeek[1], d.id).toBe(0);
    }
    for (const t of snap.problem.trainers) expect(t.hoursPerWeek[1], t.id).toBe(0);
    expect(snap.notes.join(" ")).toContain("Riverside is closed on 2026-12-25 to 2026-12-26");
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { todayIn } from "../../app/dates";
import { type Browserless, PERSONA, pageText, signIn, testDb } from "./helpers";

// The trainer moves through days and weeks on their own schedule; a bad day is a 400 naming the field.
// Dates are checked by hand: 2099-03-04 is a Wednesday, so its week runs Monday 2099-03-02 to Sunday 2099-03-08.

let sessionId = 0;
afterAll(async () => {
  if (sessionId) await testDb()("training_sessions").where({ id: sessionId }).delete();
});

describe("the trainer's week", () => {
  it("shows a day's sessions, the rest of its week, and not other weeks", async () => {
    const k = testDb();
    const user = await k("users").where({ email: PERSONA.trainer }).first("id");
    const trainer = await k("trainers").where({ user_id: user.id }).first("id", "site_id");
    const worker = await k("workers").where({ site_id: trainer.site_id }).whereNot("stage", "withdrawn").first("id");
    const device = await k("device_types").orderBy("id").first("id");
    const [s] = await k("training_sessions")
      .insert({
        worker_id: worker.id,
        device_type_id: device.id,
        trainer_id: trainer.id,
        status: "scheduled",
        scheduled_start: "2099-03-04T09:00:00",
        scheduled_end: "2099-03-04T10:00:00",
        created_at: new Date().toISOString(),
      })
      .returning("id");
    sessionId = typeof s === "object" ? s.id : s;
    const { client } = await signIn(PERSONA.trainer);
    const onTheDay = await (await client.request("/train?day=2099-03-04")).text();
    expect(onTheDay).toContain(`data-testid="session-${sessionId}"`);
    expect(onTheDay).toContain("Day shown");
    // The navigation links point at the neighbouring days and weeks.
    for (const d of ["2099-02-25", "2099-03-03", "2099-03-05", "2099-03-11"]) expect(onTheDay).toContain(`?day=${d}`);
    const sameWeek = await (await client.request("/train?day=2099-03-08")).text();
    expect(sameWeek).toContain(`data-testid="session-${sessionId}"`);
    expect(sameWeek).toContain("Rest of that week");
    const nextWeek = await (await client.request("/train?day=2099-03-09")).text();
    expect(nextWeek).not.toContain(`data-testid="session-${sessionId}"`);
  });

  it("a past session still to do reads as overdue", async () => {
    const k = testDb();
    await k("training_sessions")
      .where({ id: sessionId })
      .update({ scheduled_start: "2020-03-04T09:00:00", scheduled_end: "2020-03-04T10:00:00" });
    const { client } = await signIn(PERSONA.trainer);
    const html = await (await client.request("/train?day=2020-03-04")).text();
    expect(html).toMatch(new RegExp(`data-testid="session-${sessionId}"[\\s\\S]*?Overdue: log it`));
  });

  it("a day that is not a date is refused with a message naming it", async () => {
    const { client } = await signIn(PERSONA.trainer);
    const res = await client.request("/train?day=04%2F03%2F2099");
    expect(res.status).toBe(400);
    expect(await res.text()).toContain("Day: give a date as YYYY-MM-DD.");
  });
});

// Marks on a session made through the session page: what was saved is shown with the next session to log,
// a no-show carries a reason, and the trainer's last mark can be undone on the day it was made (never a
// severe adverse event report). Times are the site's wall clock, read with app/dates like the app does.
describe("marks on a session: saved values, the next session, no-show reasons and undo", () => {
  const created: number[] = [];
  let ctx: {
    trainerId: number;
    workerId: number;
    deviceTypeId: number;
    zone: string;
    today: string;
    course: Record<string, unknown>;
    stage: string;
    forecast: Record<string, unknown> | undefined;
  };
  const at = (hhmm: string) => `${ctx.today}T${hhmm}`;
  const undo = (client: Browserless, id: number) => client.postForm(`/train/sessions/${id}`, { intent: "undo" });
  const log = (client: Browserless, id: number, extra: Record<string, string> = {}) =>
    client.postForm(`/train/sessions/${id}`, {
      intent: "log",
      start: at("00:10"),
      end: at("00:55"),
      taskScore: "0,55",
      ...extra,
    });

  beforeAll(async () => {
    const k = testDb();
    const user = await k("users").where({ email: PERSONA.trainer }).first("id");
    const trainer = await k("trainers as t")
      .join("sites as s", "s.id", "t.site_id")
      .where("t.user_id", user.id)
      .first("t.id", "t.site_id", "s.time_zone");
    // A trainee of this site in training on a device the trainer is certified for (the last one, away from
    // the workers other files pick first).
    const c = await k("device_courses as c")
      .join("workers as w", "w.id", "c.worker_id")
      .join("trainer_certifications as tc", function () {
        this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", k.raw("?", [trainer.id]));
      })
      .where({ "w.site_id": trainer.site_id, "c.status": "training", "w.stage": "training" })
      // with a forecast, so the undo's recompute can be seen
      .whereExists(
        k("forecasts as f")
          .whereRaw("f.worker_id = c.worker_id and f.device_type_id = c.device_type_id")
          .select(k.raw("1")),
      )
      .orderBy("w.employee_number", "desc")
      .first("c.*");
    const zone = trainer.time_zone as string;
    ctx = {
      trainerId: trainer.id,
      workerId: c.worker_id,
      deviceTypeId: c.device_type_id,
      zone,
      today: todayIn(zone),
      course: await k("device_courses").where({ id: c.id }).first(),
      stage: (await k("workers").where({ id: c.worker_id }).first("stage")).stage,
      forecast: await k("forecasts").where({ worker_id: c.worker_id, device_type_id: c.device_type_id }).first(),
    };
    for (const hhmm of ["00:10", "00:20", "00:30"]) {
      const [s] = await k("training_sessions")
        .insert({
          worker_id: ctx.workerId,
          device_type_id: ctx.deviceTypeId,
          trainer_id: ctx.trainerId,
          status: "scheduled",
          scheduled_start: `${at(hhmm)}:00`,
          scheduled_end: `${at(hhmm)}:00`.replace(/0:00$/, "9:00"),
          created_at: new Date().toISOString(),
        })
        .returning("id");
      created.push(typeof s === "object" ? s.id : s);
    }
  });

  afterAll(async () => {
    const k = testDb();
    if (!created.length) return;
    await k("adverse_events").whereIn("session_id", created).delete();
    await k("safety_findings").whereIn("session_id", created).delete();
    await k("session_mark_undos").whereIn("session_id", created).delete();
    await k("training_sessions").whereIn("id", created).delete();
    // The severe event paused the course and the worker: put both (and the forecast) back as they were.
    const { id, ...course } = ctx.course;
    await k("device_courses").where({ id }).update(course);
    await k("workers").where({ id: ctx.workerId }).update({ stage: ctx.stage });
    if (ctx.forecast) {
      const { id: fid, ...f } = ctx.forecast;
      await k("forecasts").where({ id: fid }).update(f);
    }
  });

  it("a no-show needs a reason from the list (and words for other), and is counted on the worker's progress", async () => {
    const k = testDb();
    const [s1, s2] = created;
    const { client } = await signIn(PERSONA.trainer);
    const none = await client.postForm(`/train/sessions/${s1}`, { intent: "no_show" });
    expect(none.status).toBe(400);
    expect(await none.text()).toContain("No-show reason: choose one from the list.");
    const other = await client.postForm(`/train/sessions/${s1}`, { intent: "no_show", reason: "other" });
    expect(other.status).toBe(400);
    expect(await other.text()).toContain("Other reason: say why the trainee did not come.");
    expect((await k("training_sessions").where({ id: s1 }).first()).status).toBe("scheduled");

    const ok = await client.postForm(`/train/sessions/${s1}`, { intent: "no_show", reason: "ill" });
    expect(ok.status).toBe(200);
    const row = await k("training_sessions").where({ id: s1 }).first();
    expect([row.status, row.no_show_reason]).toEqual(["no_show", "ill"]);
    const page = pageText(await (await client.request(`/train/sessions/${s1}`)).text(), { dropScripts: true });
    expect(page).toContain("Reason: Ill or injured");
    // The next session to log is the one after it this week.
    expect(await (await client.request(`/train/sessions/${s1}`)).text()).toContain(`href="/train/sessions/${s2}"`);

    // Counted plainly on the progress page: every no-show of this course, this one by its reason.
    const total = (
      await k("training_sessions")
        .where({ worker_id: ctx.workerId, device_type_id: ctx.deviceTypeId, status: "no_show" })
        .count({ n: "*" })
    )[0].n;
    const progress = pageText(await (await client.request(`/progress/${ctx.workerId}/${ctx.deviceTypeId}`)).text(), {
      dropScripts: true,
    });
    expect(progress).toContain(`Missed sessions (no-shows): ${total}`);
    expect(progress).toMatch(/Ill or injured \(\d+\)/);
  });

  it("undoes the no-show the same day: the session is to do again, and the undo is on the access log", async () => {
    const k = testDb();
    const [s1] = created;
    const { client } = await signIn(PERSONA.trainer);
    const res = await undo(client, s1);
    expect(res.status).toBe(200);
    expect(pageText(await res.text(), { dropScripts: true })).toContain("No-show undone");
    const row = await k("training_sessions").where({ id: s1 }).first();
    expect([row.status, row.no_show_reason, row.logged_by, row.marked_at]).toEqual(["scheduled", null, null, null]);
    const trail = await k("session_mark_undos").where({ session_id: s1 });
    expect(trail.map((t) => [t.mark, JSON.parse(t.removed).reason])).toEqual([["no_show", "ill"]]);
    expect(
      await k("access_log").where({ worker_id: ctx.workerId, resource: "sessions", action: "undo" }).first(),
    ).toBeTruthy();
  });

  it("shows what a log saved with the next session, and undoes it the same day with hours and forecast as before", async () => {
    const k = testDb();
    const [s1, s2] = created;
    const before = await k("device_courses").where({ id: ctx.course.id }).first();
    const forecastBefore = await k("forecasts")
      .where({ worker_id: ctx.workerId, device_type_id: ctx.deviceTypeId })
      .first();
    const { client } = await signIn(PERSONA.trainer);
    const res = await log(client, s1, { ae_skin: "mild", ae_skin_notes: "Redness under the strap." });
    expect(res.status).toBe(200);
    expect(Number((await k("device_courses").where({ id: ctx.course.id }).first()).cumulative_hours)).toBeCloseTo(
      Number(before.cumulative_hours) + 0.75,
      9,
    );
    // The saved values, as stored: 00:10 to 00:55 is 45 minutes; "0,55" read as 0.55.
    const html = await (await client.request(`/train/sessions/${s1}`)).text();
    const saved = pageText(html);
    for (const t of [
      "Recorded as attended",
      "45 minutes",
      "Task score0.55",
      "Skin (redness, pressure marks, abrasion): mild",
    ])
      expect(saved).toContain(t);
    expect(html).toContain(`href="/train/sessions/${s2}"`);
    expect(saved).toContain("Undo this log");

    const undone = await undo(client, s1);
    expect(undone.status).toBe(200);
    expect(pageText(await undone.text(), { dropScripts: true })).toContain("Log undone");
    const row = await k("training_sessions").where({ id: s1 }).first();
    expect([row.status, row.task_score, row.duration_hours, row.cumulative_hours]).toEqual([
      "scheduled",
      null,
      null,
      null,
    ]);
    const after = await k("device_courses").where({ id: ctx.course.id }).first();
    expect([after.status, Number(after.cumulative_hours)]).toEqual([before.status, Number(before.cumulative_hours)]);
    expect(await k("adverse_events").where({ session_id: s1 })).toEqual([]);
    expect((await k("workers").where({ id: ctx.workerId }).first("stage")).stage).toBe(ctx.stage);
    expect(forecastBefore).toBeTruthy();
    const f = await k("forecasts").where({ worker_id: ctx.workerId, device_type_id: ctx.deviceTypeId }).first();
    expect(Number(f.hours_done)).toBeCloseTo(Number(before.cumulative_hours), 9);
    expect(f.computed_at).not.toBe(forecastBefore.computed_at);
    const trail = await k("session_mark_undos").where({ session_id: s1, mark: "attended" }).first();
    expect(JSON.parse(trail.removed).adverseEvents).toEqual([
      { kind: "skin", severity: "mild", notes: "Redness under the strap." },
    ]);
  });

  it("refuses the undo of a mark made on an earlier day, saying why", async () => {
    const k = testDb();
    const [s1] = created;
    const { client } = await signIn(PERSONA.trainer);
    expect((await log(client, s1)).status).toBe(200);
    // The mark as if made yesterday on the site's clock.
    const yesterday = new Date(Date.now() - 86_400_000).toISOString();
    await k("training_sessions").where({ id: s1 }).update({ marked_at: yesterday });
    const res = await undo(client, s1);
    expect(res.status).toBe(409);
    const text = pageText(await res.text(), { dropScripts: true });
    expect(text).toContain("A mark can be undone only on the day it was made; it stays as recorded.");
    expect((await k("training_sessions").where({ id: s1 }).first()).status).toBe("attended");
  });

  it("never undoes a log with a severe adverse event, and says so", async () => {
    const k = testDb();
    const [, s2] = created;
    const { client } = await signIn(PERSONA.trainer);
    const res = await log(client, s2, { ae_numbness: "severe", ae_numbness_notes: "Numb fingers; stopped." });
    expect(res.status).toBe(200);
    const page = pageText(await (await client.request(`/train/sessions/${s2}`)).text(), { dropScripts: true });
    expect(page).toContain("Safety reports are never undone");
    expect(page).not.toContain("Undo this log");
    const refused = await undo(client, s2);
    expect(refused.status).toBe(409);
    expect(pageText(await refused.text(), { dropScripts: true })).toContain("Safety reports are never undone");
    expect((await k("training_sessions").where({ id: s2 }).first()).status).toBe("attended");
    expect((await k("adverse_events").where({ session_id: s2 })).map((e) => e.severity)).toEqual(["severe"]);
  });

  it("the progress page carries no log form of its own, only a link to the session log", async () => {
    const { client } = await signIn(PERSONA.trainer);
    const html = await (await client.request(`/progress/${ctx.workerId}/${ctx.deviceTypeId}`)).text();
    expect(html).not.toContain('name="durationHours"');
    const next = await testDb()("training_sessions")
      .where({
        trainer_id: ctx.trainerId,
        worker_id: ctx.workerId,
        device_type_id: ctx.deviceTypeId,
        status: "scheduled",
      })
      .orderBy([{ column: "scheduled_start" }, { column: "id" }])
      .first("id");
    expect(html).toContain(`href="/train/sessions/${next.id}"`);
  });
});

import { afterAll, describe, expect, it } from "vitest";
import { PERSONA, signIn, testDb } from "./helpers";

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

import { describe, expect, it } from "vitest";
import { PERSONA, signIn, testDb } from "./helpers";

// docs/consent-and-disclosure.md: withdrawal recorded by an assessor also drops the worker from plans, in the same transaction
// as the erasure — not only withdrawals made in the worker portal.
describe("assessor-recorded planning withdrawal", () => {
  it("cancels the worker's future scheduled sessions and erases their forecasts", async () => {
    const k = testDb();
    const now = new Date().toISOString();
    const north = await k("sites").where({ code: "NY" }).first("id");
    const row = await k("training_sessions as s")
      .join("workers as w", "w.id", "s.worker_id")
      .where("s.status", "scheduled")
      .where("s.scheduled_start", ">=", now)
      .where("w.site_id", north.id)
      .whereExists(
        k("consent_records as c")
          .whereRaw("c.worker_id = w.id")
          .where({ "c.purpose": "planning", "c.status": "given" }),
      )
      .first("w.id");
    expect(row, "the demo seeds schedule future sessions for a planning-consented North Yard worker").toBeDefined();
    const before = Number(
      (await k("training_sessions")
        .where({ worker_id: row.id, status: "scheduled" })
        .where("scheduled_start", ">=", now)
        .count({ n: "*" })
        .first())!.n,
    );
    expect(before).toBeGreaterThan(0);

    const { client } = await signIn(PERSONA.assessor);
    const res = await client.postForm(`/assess/workers/${row.id}`, {
      intent: "withdraw",
      purpose: "planning",
      confirmWithdraw: "on",
    });
    expect(res.status).toBe(200);
    const after = Number(
      (await k("training_sessions")
        .where({ worker_id: row.id, status: "scheduled" })
        .where("scheduled_start", ">=", now)
        .count({ n: "*" })
        .first())!.n,
    );
    expect(after).toBe(0);
    expect(
      Number(
        (await k("training_sessions").where({ worker_id: row.id, status: "cancelled" }).count({ n: "*" }).first())!.n,
      ),
    ).toBeGreaterThanOrEqual(before);
    expect(await k("forecasts").where({ worker_id: row.id }).first()).toBeUndefined();
    const last = await k("consent_records")
      .where({ worker_id: row.id, purpose: "planning" })
      .orderBy("id", "desc")
      .first();
    expect(last.status).toBe("withdrawn");
  });

  it("takes a worker in training out of training: the stage goes back to baselined, the course keeps its hours", async () => {
    const k = testDb();
    const w = await k("workers as w")
      .where("w.stage", "training")
      .whereExists(
        k("consent_records as c")
          .whereRaw("c.worker_id = w.id")
          .where({ "c.purpose": "planning", "c.status": "given" })
          .whereRaw(
            "c.id = (select max(id) from consent_records x where x.worker_id = w.id and x.purpose = 'planning')",
          ),
      )
      .whereExists(k("device_courses as d").whereRaw("d.worker_id = w.id").where("d.status", "training"))
      .orderBy("w.id", "desc")
      .first("w.id");
    expect(w, "the demo seeds have planning-consented workers in training").toBeDefined();
    const course = await k("device_courses")
      .where({ worker_id: w.id, status: "training" })
      .first("id", "cumulative_hours");
    const { client } = await signIn(PERSONA.assessor);
    const res = await client.postForm(`/assess/workers/${w.id}`, {
      intent: "withdraw",
      purpose: "planning",
      confirmWithdraw: "on",
    });
    expect(res.status).toBe(200);
    // Nothing can plan the worker any more, so "Training" would never end: the stage says what is true now.
    expect((await k("workers").where({ id: w.id }).first("stage")).stage).toBe("baselined");
    const change = await k("stage_changes").where({ worker_id: w.id }).orderBy("id", "desc").first();
    expect([change.from_stage, change.to_stage]).toEqual(["training", "baselined"]);
    const after = await k("device_courses").where({ id: course.id }).first("status", "cumulative_hours");
    expect(after).toEqual({ status: "training", cumulative_hours: course.cumulative_hours });
  });
});

import { afterAll, describe, expect, it } from "vitest";
import { type Browserless, PERSONA, signIn, testDb } from "./helpers";

// Each role's home lists what waits for that person, counted over their scope. Every check changes
// one thing in the database and reads the home page again through the app: the count moves by exactly
// what was changed (the reference is the change itself, counted by hand).

/** The count shown for one queue item on a home page. */
async function queueCount(client: Browserless, path: string, key: string): Promise<number> {
  const res = await client.request(path);
  expect(res.status, path).toBe(200);
  const html = await res.text();
  const m = new RegExp(`data-testid="queue-${key}"[\\s\\S]*?min-w-10[^>]*>([0-9,]+)<`).exec(html);
  expect(m, `queue item ${key} on ${path}`).not.toBeNull();
  return Number(m![1].replace(/,/g, ""));
}

const cleanup: (() => Promise<unknown>)[] = [];
afterAll(async () => {
  for (const undo of cleanup.reverse()) await undo();
});
const now = () => new Date().toISOString();

describe("work queues on each role's home", () => {
  it("admin: an active user without a role is counted, and no longer once given one", async () => {
    const { client } = await signIn(PERSONA.admin);
    const before = await queueCount(client, "/admin", "no-role");
    const k = testDb();
    const [u] = await k("users")
      .insert({
        email: "queue.norole@harrowvale.example",
        display_name: "No Role Yet",
        active: true,
        created_at: now(),
      })
      .returning("id");
    const id = typeof u === "object" ? u.id : u;
    cleanup.push(() => k("users").where({ id }).delete());
    expect(await queueCount(client, "/admin", "no-role")).toBe(before + 1);
    await k("role_assignments").insert({ user_id: id, role: "worker", created_at: now() });
    expect(await queueCount(client, "/admin", "no-role")).toBe(before);
  });

  it("assessor: a paused worker at their site and an open question are counted", async () => {
    const { client } = await signIn(PERSONA.assessor);
    const k = testDb();
    const pausedBefore = await queueCount(client, "/assess", "paused");
    const questionsBefore = await queueCount(client, "/assess", "questions");
    const w = await k("workers").whereNotIn("stage", ["paused", "withdrawn"]).orderBy("id").first("id", "stage");
    await k("workers").where({ id: w.id }).update({ stage: "paused" });
    cleanup.push(() => k("workers").where({ id: w.id }).update({ stage: w.stage }));
    const [r] = await k("review_requests")
      .insert({ worker_id: w.id, subject: "forecast", message: "Is my figure right?", created_at: now() })
      .returning("id");
    const rid = typeof r === "object" ? r.id : r;
    cleanup.push(() => k("review_requests").where({ id: rid }).delete());
    expect(await queueCount(client, "/assess", "paused")).toBe(pausedBefore + 1);
    expect(await queueCount(client, "/assess", "questions")).toBe(questionsBefore + 1);
  });

  it("trainer: a past session still to be logged is overdue; once logged it is not", async () => {
    const { client } = await signIn(PERSONA.trainer);
    const k = testDb();
    const user = await k("users").where({ email: PERSONA.trainer }).first("id");
    const trainer = await k("trainers").where({ user_id: user.id }).first("id", "site_id");
    const worker = await k("workers").where({ site_id: trainer.site_id }).whereNot("stage", "withdrawn").first("id");
    const device = await k("device_types").orderBy("id").first("id");
    const before = await queueCount(client, "/train", "overdue");
    const [s] = await k("training_sessions")
      .insert({
        worker_id: worker.id,
        device_type_id: device.id,
        trainer_id: trainer.id,
        status: "scheduled",
        scheduled_start: "2026-01-05T09:00:00",
        scheduled_end: "2026-01-05T10:00:00",
        created_at: now(),
      })
      .returning("id");
    const sid = typeof s === "object" ? s.id : s;
    cleanup.push(() => k("training_sessions").where({ id: sid }).delete());
    expect(await queueCount(client, "/train", "overdue")).toBe(before + 1);
    await k("training_sessions").where({ id: sid }).update({ status: "no_show" });
    expect(await queueCount(client, "/train", "overdue")).toBe(before);
  });

  it("coordinator: a published future session whose trainer goes on leave that day is counted", async () => {
    const { client } = await signIn(PERSONA.coordinator);
    const k = testDb();
    const trainer = await k("trainers").orderBy("id").first("id", "site_id");
    const worker = await k("workers").where({ site_id: trainer.site_id }).whereNot("stage", "withdrawn").first("id");
    const device = await k("device_types").orderBy("id").first("id");
    const [run] = await k("allocation_runs")
      .insert({
        label: "work queue test",
        parameters: JSON.stringify({ startDate: "2099-03-02", horizonWeeks: 1, pool: { siteIds: [trainer.site_id] } }),
        status: "done",
        created_at: "2020-01-01T00:00:00.000Z",
        published_at: "2020-01-01T00:00:00.000Z",
      })
      .returning("id");
    const RUN = typeof run === "object" ? run.id : run;
    cleanup.push(() => k("allocation_runs").where({ id: RUN }).delete());
    const [s] = await k("training_sessions")
      .insert({
        worker_id: worker.id,
        device_type_id: device.id,
        trainer_id: trainer.id,
        allocation_run_id: RUN,
        status: "scheduled",
        scheduled_start: "2099-03-02T09:00:00",
        scheduled_end: "2099-03-02T10:00:00",
        created_at: now(),
      })
      .returning("id");
    const sid = typeof s === "object" ? s.id : s;
    cleanup.push(() => k("training_sessions").where({ id: sid }).delete());
    const before = await queueCount(client, "/coordinate", "affected");
    const [l] = await k("trainer_leave")
      .insert({ trainer_id: trainer.id, starts_on: "2099-03-01", ends_on: "2099-03-02", created_at: now() })
      .returning("id");
    const lid = typeof l === "object" ? l.id : l;
    cleanup.push(() => k("trainer_leave").where({ id: lid }).delete());
    expect(await queueCount(client, "/coordinate", "affected")).toBe(before + 1);
    // Leave ending the day before does not touch the session.
    await k("trainer_leave").where({ id: lid }).update({ ends_on: "2099-03-01" });
    expect(await queueCount(client, "/coordinate", "affected")).toBe(before);
  });
});

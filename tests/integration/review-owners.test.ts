import { afterAll, describe, expect, inject, it } from "vitest";
import { readOutbox } from "../../scripts/smtp-catcher";
import { PERSONA, signIn, testDb } from "./helpers";

// A worker's question goes to the person who owns the decision: about session timing (the plan) to the
// coordinators, about a figure (the forecast) to the assessors. The owners are e-mailed that a request
// waits; only they see and answer it. The demo's worker persona (North Yard) asks.

const outbox = () => readOutbox(inject("outboxDir"));
const created: number[] = [];
afterAll(async () => {
  if (created.length) await testDb()("review_requests").whereIn("id", created).delete();
});

async function ask(subject: "plan" | "forecast", message: string) {
  const { client } = await signIn(PERSONA.worker);
  const res = await client.postForm("/me/review", { subject, message });
  expect(res.status).toBe(200);
  const row = await testDb()("review_requests").where({ message }).first("id");
  created.push(row.id);
  return { id: row.id as number, page: await res.text() };
}

describe("review requests go to the owner of the decision", () => {
  it("a plan question reaches the coordinators only; they answer it, the assessors cannot", async () => {
    const before = outbox().length;
    const message = `Owners check ${Date.now()}: my sessions clash with the late shift.`;
    const { id, page } = await ask("plan", message);
    expect(page).toContain("Your request is with the training coordinators");
    const waiting = outbox()
      .slice(before)
      .filter((m) => m.subject === "A worker has asked for a review");
    const to = waiting.flatMap((m) => m.to);
    expect(to).toContain(PERSONA.coordinator);
    expect(to).not.toContain(PERSONA.assessor);
    expect(waiting.every((m) => !m.text.includes("late shift"))).toBe(true); // the question itself stays in the app

    const { client: assessor } = await signIn(PERSONA.assessor);
    expect(await (await assessor.request("/assess/reviews")).text()).not.toContain(message.slice(0, 30));
    const refused = await assessor.postForm("/assess/reviews", { reviewId: String(id), answer: "Not mine." });
    expect(refused.status).toBe(404);
    expect((await testDb()("review_requests").where({ id }).first("status")).status).toBe("open");

    const { client: coordinator } = await signIn(PERSONA.coordinator);
    expect(await (await coordinator.request("/coordinate/reviews")).text()).toContain(message.slice(0, 30));
    const ok = await coordinator.postForm("/coordinate/reviews", {
      reviewId: String(id),
      answer: "Moved to mornings.",
    });
    expect(ok.status).toBe(200);
    expect((await testDb()("review_requests").where({ id }).first("status")).status).toBe("answered");
  });

  it("a forecast question reaches the assessors, and coordinators do not see it", async () => {
    const before = outbox().length;
    const message = `Owners check ${Date.now()}: my forecast looks too long.`;
    await ask("forecast", message);
    const to = outbox()
      .slice(before)
      .filter((m) => m.subject === "A worker has asked for a review")
      .flatMap((m) => m.to);
    expect(to).toContain(PERSONA.assessor);
    expect(to).not.toContain(PERSONA.coordinator);
    const { client: coordinator } = await signIn(PERSONA.coordinator);
    expect(await (await coordinator.request("/coordinate/reviews")).text()).not.toContain(message.slice(0, 30));
    expect((await coordinator.request("/assess/reviews")).status).toBe(403);
  });
});

// Trainer portal in the browser at tablet-in-one-hand width (390 px): the day's sessions, logging a
// score moves the worker's progress chart, a severe adverse event pauses the worker and e-mails the assessors,
// another trainer's session is refused. Invented demo people (seeds/07_portals_demo.ts).
import type { TestDb } from "../integration/helpers";
import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";
import { closeSql, inesTrainerId, portalAccount, seriousViolations, sql } from "./portal-accounts";

test.afterAll(closeSql);

/** A start `hoursAgo` before now, but never before this week's Monday 00:00 UTC (the trainer's week view). */
function startThisWeek(hoursAgo: number): Date {
  const now = new Date();
  const monday = new Date(
    Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate() - ((now.getUTCDay() + 6) % 7)),
  );
  const start = new Date(Math.max(now.getTime() - hoursAgo * 3_600_000, monday.getTime()));
  start.setUTCSeconds(0, 0);
  return start;
}

async function schedule(
  db: TestDb,
  workerId: number,
  deviceTypeId: number,
  trainerId: number,
  start: Date,
  minutes: number,
) {
  const [row] = await db("training_sessions")
    .insert({
      worker_id: workerId,
      device_type_id: deviceTypeId,
      trainer_id: trainerId,
      scheduled_start: start.toISOString(),
      scheduled_end: new Date(start.getTime() + minutes * 60_000).toISOString(),
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");
  return row.id as number;
}

test("a trainer logs a score and the worker's chart moves; a severe event pauses the worker and e-mails the assessors", async ({
  page,
  signInAs,
  pageAs,
  outbox,
  stack,
}, testInfo) => {
  const db = sql(stack.databaseUrl);
  const w = await portalAccount(db, 0);
  const foot = w.device;
  const ines = { id: await inesTrainerId(db) };
  const start = startThisWeek(3);
  const first = await schedule(db, w.id, foot.id, ines.id, start, Math.min(45, foot.wearTimeLimitMinutes));
  const second = await schedule(db, w.id, foot.id, ines.id, new Date(start.getTime() + 60 * 60_000), 30);

  const worker = await pageAs(w.email);
  const points = worker.getByTestId(`my-progress-${foot.code}`).locator(".recharts-scatter-symbol");
  await expect(points.first()).toBeVisible();
  const before = await points.count();

  await page.setViewportSize({ width: 390, height: 860 });
  await signInAs(page, persona("trainer").email);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("My training days");
  const card = page.getByTestId(`session-${first}`);
  await expect(card).toContainText(w.employeeNumber);
  await expect(card).toContainText(foot.name);
  await expectNoSidewaysScroll(page, 390);
  const target = await card.getByRole("link", { name: "Attended: log it" }).boundingBox();
  expect(target!.height).toBeGreaterThanOrEqual(44); // large touch targets
  await page.screenshot({ path: testInfo.outputPath("trainer-day-390.png"), fullPage: true });

  await card.getByRole("link", { name: "Attended: log it" }).click();
  await expect(page.getByLabel("Device safety cautions")).toBeVisible();
  await page.getByLabel("Task score (0–1)").fill("0.66");
  await page.getByLabel("Notes").fill("Good toe control today.");
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("trainer-log-390.png"), fullPage: true });
  await page.getByRole("button", { name: "Save session" }).click();
  await expect(page.getByRole("status")).toContainText("Session logged");
  // What was saved, as stored, and the way on to the next session.
  const recorded = page.getByTestId("recorded");
  await expect(recorded).toContainText("Task score0.66");
  await expect(recorded).toContainText("Good toe control today.");
  await expect(recorded).toContainText("Adverse eventsnone");
  await expect(page.getByTestId("next-session").getByRole("link")).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("trainer-saved-390.png"), fullPage: true });

  // A mistake: undone the same day, the session is to do again, then logged once more.
  await recorded.getByRole("button", { name: "Undo this log" }).click();
  await expect(page.getByRole("status")).toContainText("Log undone");
  expect((await db("training_sessions").where({ id: first }).first()).status).toBe("scheduled");
  await page.getByLabel("Task score (0–1)").fill("0,66");
  await page.getByLabel("Notes").fill("Good toe control today.");
  await page.getByRole("button", { name: "Save session" }).click();
  await expect(page.getByRole("status")).toContainText('Session logged with task score 0.66 (typed "0,66")');

  await worker.reload();
  await expect(points).toHaveCount(before + 1);
  await worker.screenshot({ path: testInfo.outputPath("worker-progress-after-log.png"), fullPage: true });

  // The second session: severe numbness.
  await page.goto(`/train/sessions/${second}`);
  await page.getByLabel("Task score (0–1)").fill("0.52");
  await page.getByRole("group", { name: "Numbness or tingling" }).getByLabel("severe").check();
  await page.getByLabel("Numbness or tingling: what happened (optional)").fill("Numb toes after 20 minutes; stopped.");
  await page.getByRole("button", { name: "Save session" }).click();
  await expect(page.getByRole("status")).toContainText("Training is paused");
  // A severe event report is never undone, and the page says so.
  await expect(page.getByTestId("undo-refused")).toContainText("Safety reports are never undone");
  await expect(page.getByRole("button", { name: /^Undo/ })).toHaveCount(0);
  const mail = await outbox.waitFor(
    (m) =>
      m.subject === `Training paused: severe adverse event for ${w.employeeNumber}` &&
      m.text.includes("Numb toes after 20 minutes"),
  );
  expect(mail.to).toContain(persona("assessor").email);
  await worker.reload();
  await expect(worker.getByTestId("paused")).toContainText(foot.name);
  await expect(worker.getByTestId("stage")).toHaveText("Paused");
  await page.goto("/train");
  await expect(page.getByTestId(`session-${first}`)).toContainText("Logged");
});

test("a no-show is recorded with a reason from the trainer's day, and counted on the worker's progress", async ({
  page,
  signInAs,
  stack,
}) => {
  const db = sql(stack.databaseUrl);
  const w = await portalAccount(db, 1);
  const id = await schedule(db, w.id, w.device.id, await inesTrainerId(db), startThisWeek(2), 30);
  await page.setViewportSize({ width: 390, height: 860 });
  await signInAs(page, persona("trainer").email);
  await page
    .getByTestId(`session-${id}`)
    .getByRole("link", { name: /^No-show/ })
    .click();
  const form = page.getByRole("region", { name: "The trainee did not come" });
  await form.getByRole("button", { name: "Record no-show" }).click();
  await expect(form.getByText("No-show reason: choose one from the list.")).toBeVisible();
  await form.getByLabel("Other", { exact: true }).check();
  await form.getByRole("button", { name: "Record no-show" }).click();
  await expect(form.getByText("Other reason: say why the trainee did not come.")).toBeVisible();
  await form.getByLabel("Other reason: what happened (required for other)").fill("Bus strike this morning.");
  await form.getByRole("button", { name: "Record no-show" }).click();
  await expect(page.getByRole("status")).toContainText("No-show recorded");
  await expect(page.getByTestId("recorded")).toContainText("Reason: Other: Bus strike this morning.");
  await expect(page.getByTestId("recorded").getByRole("button", { name: "Undo this no-show" })).toBeVisible();
  await page.getByRole("link", { name: "Trainee's progress curve" }).click();
  await expect(page.getByTestId("no-shows")).toContainText("Other: Bus strike this morning. (1)");
  await expect(page.getByTestId("log-here")).toBeVisible();
  await expect(page.getByLabel("Practice time (hours)")).toHaveCount(0);
});

test("a trainer cannot open or record another trainer's session (403)", async ({ page, signInAs, stack }) => {
  const db = sql(stack.databaseUrl);
  const other = await db("trainers as t")
    .join("users as u", "u.id", "t.user_id")
    .whereNot("u.email", persona("trainer").email)
    .first("t.id");
  const w = await db("workers").where({ employee_number: "HV-00200" }).first("id");
  const back = await db("device_types").where({ code: "EXO-BACK" }).first("id");
  const id = await schedule(db, w.id, back.id, other.id, new Date(Date.now() + 3_600_000), 60);
  await signInAs(page, persona("trainer").email);
  const res = await page.goto(`/train/sessions/${id}`);
  expect(res?.status()).toBe(403);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("Not allowed");
  await expect(page.getByText("HV-00200")).toHaveCount(0);
  const post = await page.request.post(`/train/sessions/${id}`, {
    form: { intent: "no_show" },
    headers: { Origin: new URL(page.url()).origin },
  });
  expect(post.status()).toBe(403);
  expect((await db("training_sessions").where({ id }).first()).status).toBe("scheduled");
});

test("the trainer's day and session log have no serious or critical accessibility violations at 390 px (axe-core)", async ({
  page,
  signInAs,
  stack,
}) => {
  const db = sql(stack.databaseUrl);
  const s = await db("training_sessions")
    .where({ trainer_id: await inesTrainerId(db), status: "scheduled" })
    .orderBy("id")
    .first("id");
  await page.setViewportSize({ width: 390, height: 860 });
  await signInAs(page, persona("trainer").email);
  for (const path of ["/train", `/train/sessions/${s.id}`]) {
    await page.goto(path);
    await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
    expect(await seriousViolations(page, path)).toEqual([]);
  }
});

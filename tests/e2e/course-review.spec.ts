// A paused course in the browser: the trainer logs a session over the wear-time limit with a severe event
// (saved, the breach flagged), the assessor opens the review from the worker record at desktop width and at
// 390 px, resumes with a lower limit, and the trainer sees the status. Invented demo people.
import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";
import { closeSql, inesTrainerId, seriousViolations, sql } from "./portal-accounts";

test.afterAll(closeSql);

test("the assessor reviews a paused course and resumes it with a lower wear-time limit, at 1366 and 390 px", async ({
  page,
  signInAs,
  pageAs,
  stack,
}, testInfo) => {
  test.setTimeout(90_000);
  const db = sql(stack.databaseUrl);
  const ines = await inesTrainerId(db);
  const site = await db("trainers").where({ id: ines }).first("site_id");
  // A trainee at Ines's site without a portal account (the portal specs use those), on a device she teaches.
  const w = await db("device_courses as c")
    .join("workers as w", "w.id", "c.worker_id")
    .join("device_types as d", "d.id", "c.device_type_id")
    .join("trainer_certifications as tc", function () {
      this.on("tc.device_type_id", "c.device_type_id").andOn("tc.trainer_id", db.raw("?", [ines]));
    })
    .join("forecasts as f", function () {
      this.on("f.worker_id", "c.worker_id").andOn("f.device_type_id", "c.device_type_id");
    })
    .where({ "c.status": "training", "w.site_id": site.site_id })
    .whereNull("w.user_id")
    .orderBy("w.employee_number", "desc")
    .first("w.id", "w.employee_number", "w.given_name", "w.family_name", "d.id as device_id", "d.name as device");
  expect(w, "a trainee of Ines's without a portal account").toBeTruthy();
  const limit = Number(
    (await db("device_types").where({ id: w.device_id }).first("wear_time_limit_minutes")).wear_time_limit_minutes,
  );
  const start = new Date(Date.now() - 4 * 3_600_000);
  start.setUTCSeconds(0, 0);
  start.setUTCMinutes(0);
  const [s] = await db("training_sessions")
    .insert({
      worker_id: w.id,
      device_type_id: w.device_id,
      trainer_id: ines,
      scheduled_start: start.toISOString().slice(0, 19),
      scheduled_end: new Date(start.getTime() + (limit + 10) * 60_000).toISOString().slice(0, 19),
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");

  // The trainer logs the planned times (10 minutes over the limit) with a severe event.
  const trainer = await pageAs(persona("trainer").email);
  await trainer.goto(`/train/sessions/${s.id}`);
  await trainer.getByLabel("Task score (0–1)").fill("0.5");
  await trainer.getByRole("group", { name: "Pain" }).getByLabel("severe").check();
  await trainer.getByLabel("Pain: what happened (optional)").fill("Sharp pain in the wrist; session ended.");
  await trainer.getByRole("button", { name: "Save session" }).click();
  const saved = trainer.getByRole("status");
  await expect(saved).toContainText(`over the wear-time limit of ${limit} minutes: saved as logged`);
  await expect(saved).toContainText("Training is paused");

  // The assessor: from the worker record to the review, at desktop width.
  await page.setViewportSize({ width: 1366, height: 900 });
  await signInAs(page, persona("assessor").email);
  await page.goto(`/assess/workers/${w.id}`);
  await page
    .getByTestId("courses-to-review")
    .getByRole("link", { name: `${w.device}: paused, review and decide` })
    .click();
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Course review");
  await expect(page.getByTestId("course-status")).toContainText("Paused: waiting for your decision");
  await expect(page.getByTestId("events")).toContainText("Sharp pain in the wrist");
  await expect(page.getByTestId("finding")).toContainText(`${limit + 10} minutes, over the wear-time limit`);
  await expect(page.getByTestId("session-log")).toContainText(`${limit + 10} min`);
  await expectNoSidewaysScroll(page, 1366);
  await page.screenshot({ path: testInfo.outputPath("course-review-1366.png"), fullPage: true });

  // At 390 px: the page fits, the session log scrolls inside its own focusable region.
  await page.setViewportSize({ width: 390, height: 860 });
  await expectNoSidewaysScroll(page, 390);
  await expect(page.getByRole("region", { name: "Session log (scrolls sideways)" })).toHaveAttribute("tabindex", "0");
  expect(await seriousViolations(page, "course review 390 px")).toEqual([]);
  // A missing note is named at the field.
  await page.getByLabel("Resume with conditions").check();
  await page.getByRole("button", { name: "Record decision" }).click();
  await expect(page.getByText("Wear-time limit: set a lower limit for this worker")).toBeVisible();
  const own = Math.max(5, Math.floor(limit / 2));
  await page.getByLabel(/^Wear-time limit for this worker/).fill(String(own));
  await page.getByLabel("Clinical note").fill("Strap refitted, wrist checked; shorter sessions for now.");
  await page.getByRole("button", { name: "Record decision" }).click();
  await expect(page.getByRole("status")).toContainText(
    `Decision recorded: resume with conditions, wear-time limit ${own} minutes per session for this worker.`,
  );
  await expect(page.getByTestId("decisions")).toContainText("Strap refitted");
  await expect(page.getByTestId("course-status")).toContainText("Resume with conditions");
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("course-review-390.png"), fullPage: true });

  // The trainer sees the status with the new limit.
  await trainer.goto(`/train/sessions/${s.id}`);
  await expect(trainer.getByTestId("review-status")).toContainText(
    `at most ${own} minutes per session for this trainee`,
  );
});

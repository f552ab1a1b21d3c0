// Worker portal in the browser: a worker sees their plan, downloads their data, withdraws planning
// consent and leaves the plans (future sessions cancelled, forecasts gone, coordinator e-mailed); the home page
// at 390 px; a review request answered by an assessor. Invented demo people (seeds/07_portals_demo.ts).
import fs from "node:fs";
import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";
import { closeSql, inesTrainerId, portalAccount, seriousViolations, sql } from "./portal-accounts";

test.afterAll(closeSql);

test("a worker sees their plan, downloads their data, withdraws planning consent and leaves every plan", async ({
  page,
  signInAs,
  outbox,
  stack,
}, testInfo) => {
  const db = sql(stack.databaseUrl);
  const me = await portalAccount(db, 1);
  const arm = me.device;
  const ines = { id: await inesTrainerId(db) };
  const unit = await db("device_units").where({ device_type_id: arm.id, site_id: me.siteId }).first("id", "serial");
  // A session two days ahead, whatever today is.
  const start = new Date(Date.now() + 48 * 3_600_000);
  start.setUTCHours(10, 0, 0, 0);
  const [s] = await db("training_sessions")
    .insert({
      worker_id: me.id,
      device_type_id: arm.id,
      trainer_id: ines.id,
      device_unit_id: unit.id,
      scheduled_start: start.toISOString(),
      scheduled_end: new Date(start.getTime() + Math.min(60, arm.wearTimeLimitMinutes) * 60_000).toISOString(),
      status: "scheduled",
      created_at: new Date().toISOString(),
    })
    .returning("id");

  await page.setViewportSize({ width: 390, height: 860 });
  expect((await signInAs(page, me.email)).pathname).toBe("/me");
  const next = page.getByTestId("next-sessions");
  await expect(next).toContainText(arm.name);
  await expect(next).toContainText("Ines Calloway");
  await expect(next).toContainText(`unit ${unit.serial}`);
  await expect(page.getByTestId("forecasts")).toContainText(arm.name);
  await expect(page.getByLabel("Device safety cautions")).toBeVisible();
  await page.screenshot({ path: testInfo.outputPath("worker-plan-390.png"), fullPage: true });

  // Downloads: JSON and XLSX of everything held, and the calendar file.
  await page.getByRole("link", { name: "My record and downloads" }).click();
  const [json] = await Promise.all([
    page.waitForEvent("download"),
    page.getByRole("link", { name: "Download as JSON" }).click(),
  ]);
  expect(json.suggestedFilename()).toBe(
    `limberly-my-data-${me.employeeNumber}-${new Date().toISOString().slice(0, 10)}.json`,
  );
  const data = JSON.parse(fs.readFileSync(await json.path(), "utf8"));
  expect(data.worker.employeeNumber).toBe(me.employeeNumber);
  // Session times are the site's wall-clock times, exported without a zone and with the site's zone named.
  expect(
    data.sessions.some(
      (x: { scheduledStart: string; timeZone: string }) =>
        x.scheduledStart === start.toISOString().slice(0, 19) && x.timeZone === "Europe/London",
    ),
  ).toBe(true);
  expect(new Set(JSON.stringify(data).match(/HV-\d{5}/g))).toEqual(new Set([me.employeeNumber]));
  const [xlsx] = await Promise.all([
    page.waitForEvent("download"),
    page.getByRole("link", { name: "Download as spreadsheet (XLSX)" }).click(),
  ]);
  expect(xlsx.suggestedFilename()).toMatch(/\.xlsx$/);
  expect(
    fs
      .readFileSync(await xlsx.path())
      .subarray(0, 2)
      .toString(),
  ).toBe("PK");
  const [ics] = await Promise.all([
    page.waitForEvent("download"),
    page.getByRole("link", { name: /calendar file/ }).click(),
  ]);
  const cal = fs.readFileSync(await ics.path(), "utf8");
  // Same UID scheme as the allocation area's publish e-mails (one event per session in the worker's calendar).
  expect(cal).toContain(`UID:w${me.id}-${start.toISOString().slice(0, 10)}-1000-${arm.id}@limberly`);
  // Wall-clock digits with the site's zone (the demo sites keep UK time).
  expect(cal).toContain(`DTSTART;TZID=Europe/London:${start.toISOString().slice(0, 10).replace(/-/g, "")}T100000`);

  // Withdraw planning consent.
  await page.getByRole("navigation").getByRole("link", { name: "My consent" }).click();
  const planning = page.getByTestId("consent-planning");
  await expect(page.getByTestId("consent-status-planning")).toContainText("Given");
  // Given: a summary; the text and the withdrawal are behind "Change", with what cannot be undone said exactly.
  await expect(planning.getByRole("button", { name: "Withdraw planning consent" })).toBeHidden();
  await planning.getByText("Change", { exact: true }).click();
  await planning.getByText("Withdraw planning consent…").click();
  await expect(planning).toContainText("The erasure cannot be undone: erased data do not come back.");
  await expect(planning).toContainText("Consent can be given again later");
  const confirm = planning.getByLabel("I understand: this takes effect at once, and the erasure cannot be undone.");
  await expect(confirm).not.toBeChecked();
  await planning.getByRole("button", { name: "Withdraw planning consent" }).click();
  await expect(planning.getByText("Confirm withdrawal: tick the box")).toBeVisible(); // refused without the confirmation
  await planning.getByLabel("I understand: this takes effect at once, and the erasure cannot be undone.").check();
  await planning.getByRole("button", { name: "Withdraw planning consent" }).click();
  await expect(page.getByRole("status")).toContainText("Your planning consent is withdrawn");
  await expect(page.getByTestId("consent-status-planning")).toContainText("Withdrawn");
  // Withdrawn: it can be given again, and the box is not ticked for the worker.
  await expect(planning.getByLabel(/I have read the current text/)).not.toBeChecked();
  await page.screenshot({ path: testInfo.outputPath("worker-consent-withdrawn-390.png"), fullPage: true });

  // Gone from the plans: no sessions ahead, no forecast, the coordinator told.
  await page.getByRole("navigation").getByRole("link", { name: "My plan and data" }).click();
  await expect(page.getByTestId("no-sessions")).toBeVisible();
  await expect(page.getByTestId("no-forecast")).toBeVisible();
  expect((await db("training_sessions").where({ id: s.id }).first()).status).toBe("cancelled");
  expect(Number((await db("forecasts").where({ worker_id: me.id }).count({ n: "*" }).first())?.n)).toBe(0);
  const mail = await outbox.waitFor(
    (m) => m.subject === `Consent withdrawn: ${me.employeeNumber} leaves training plans`,
  );
  expect(mail.to).toContain(persona("coordinator").email);
  // The allocation pool takes only workers with planning consent in force and a forecast (docs/consent-and-disclosure.md); both are gone.
  // (tests/integration/portals.test.ts builds the next run's pool with the allocation area's buildProblem and
  // checks the worker is gone from it.)
  const api = await page.request.get("/api/v1/me/plan");
  const plan = await api.json();
  expect(plan.sessions).toEqual([]);
  expect(plan.forecasts).toEqual([]);
});

test("the worker home fits 390 px: next sessions, stage, forecast in words, progress chart and cautions", async ({
  page,
  signInAs,
  stack,
}, testInfo) => {
  await page.setViewportSize({ width: 390, height: 860 });
  await signInAs(page, persona("worker").email);
  await expect(page.getByRole("heading", { level: 1 })).toHaveText("My plan and data");
  await expect(page.getByTestId("stage")).not.toBeEmpty();
  await expect(page.getByTestId("forecasts")).toContainText(/hours/);
  await expect(page.getByTestId("forecasts")).toContainText(/between \d/);
  await expect(page.getByTestId("my-progress-SRF-FOOT").locator(".recharts-scatter-symbol").first()).toBeVisible();
  await expect(page.getByLabel("Device safety cautions")).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("worker-home-390.png"), fullPage: true });
  await page.setViewportSize({ width: 1280, height: 900 });
  await page.screenshot({ path: testInfo.outputPath("worker-home-desktop.png"), fullPage: true });
  // Another worker's data are not reachable by URL.
  const other = await portalAccount(sql(stack.databaseUrl), 0);
  for (const path of [
    `/forecast/${other.id}`,
    `/progress/${other.id}/${other.device.id}`,
    `/assess/workers/${other.id}`,
  ]) {
    const res = await page.goto(path);
    expect(res?.status(), path).toBe(403);
  }
});

test("a worker asks about their plan; a coordinator answers in the app and the worker is e-mailed", async ({
  page,
  signInAs,
  pageAs,
  outbox,
  stack,
}) => {
  const db = sql(stack.databaseUrl);
  const me = await portalAccount(db, 0);
  await signInAs(page, me.email);
  await page.goto("/me/review");
  const message = `My session times clash with the Friday shift (e2e ${Date.now()}).`;
  await page.getByLabel("What should be reviewed?").selectOption("plan");
  await page.getByLabel("What would you like a person to look at?").fill(message);
  await page.getByRole("button", { name: "Send request" }).click();
  // A question about session timing goes to the person who owns the plan: a training coordinator.
  await expect(page.getByRole("status")).toContainText("Your request is with the training coordinators");
  await expect(page.getByTestId("my-reviews")).toContainText(message);

  const coordinator = await pageAs(persona("coordinator").email);
  await coordinator.goto("/coordinate/reviews");
  const item = coordinator.getByTestId("review-queue").locator("li").filter({ hasText: message });
  const answer = "We will move your sessions to Mondays from next week.";
  await item.getByLabel(`Answer to ${me.name}`).fill(answer);
  await item.getByRole("button", { name: "Send answer" }).click();
  await expect(coordinator.getByRole("status")).toContainText("Answer saved and e-mailed");
  // The coordinators of the worker's site were told a request waits; the assessors were not (it is not theirs).
  await outbox.waitFor(
    (m) => m.to.includes(persona("coordinator").email) && m.subject === "A worker has asked for a review",
  );

  const mail = await outbox.waitFor(
    (m) => m.to.includes(me.email) && m.subject === "Your review request has been answered" && m.text.includes(answer),
  );
  expect(mail.text).toContain(persona("coordinator").displayName);
  await page.reload();
  await expect(page.getByTestId("my-reviews")).toContainText(answer);
});

test("the worker pages have no serious or critical accessibility violations at 390 px (axe-core)", async ({
  page,
  signInAs,
}) => {
  await page.setViewportSize({ width: 390, height: 860 });
  await signInAs(page, persona("worker").email);
  for (const path of ["/me", "/me/consent", "/me/record", "/me/review"]) {
    await page.goto(path);
    await expect(page.getByRole("heading", { level: 1 })).toBeVisible();
    expect(await seriousViolations(page, path)).toEqual([]);
  }
});

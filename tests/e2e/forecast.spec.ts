// Forecast area in the browser: an assessor fits a model and reads its diagnostics, a second
// assessor approves it, a worker's forecast shows hours, interval and explanation; logging a session
// moves the remaining-hours forecast and the progress chart. Demo data: seeds/03_forecast_demo.ts (invented).
import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";
import { closeSql, inesTrainerId, sql } from "./portal-accounts";

const second = "rhea.lindqvist@harrowvale.example";

test.afterAll(closeSql);

test("an assessor fits and saves a model, a second assessor approves it, and a worker's forecast uses it", async ({
  page,
  signInAs,
  pageAs,
}, testInfo) => {
  await signInAs(page, persona("assessor").email);
  await page.goto("/models/new");
  await page.getByLabel("Device type").selectOption({ label: "Back-support exoskeleton" });
  await page.getByRole("button", { name: "Fit model" }).click();
  const diagnostics = page.getByTestId("diagnostics");
  await expect(diagnostics).toBeVisible();
  expect(Number(await page.getByTestId("cohort-size").textContent())).toBeGreaterThanOrEqual(30);
  // Courses still in training count in the cohort (censored), not among the exclusions.
  expect(Number(await page.getByTestId("still-training").textContent())).toBeGreaterThan(0);
  await expect(page.getByTestId("exclusions")).not.toContainText("Still in training");
  await expect(page.getByTestId("mae")).toHaveText(/^\d+\.\d h$/);
  await expect(page.getByTestId("coverage")).toHaveText(/^\d+ %$/);
  await expect(page.getByTestId("planning-coverage")).toHaveText(/^\d+ %$/);
  await expect(page.getByTestId("stopped-as-miss")).toHaveText(/^\d+ %$/);
  await expect(page.getByRole("heading", { name: "Checked by leaving out one past trainee at a time" })).toBeVisible();
  await expect(page.getByTestId("risk-group-chart").locator(".recharts-bar-rectangle")).toHaveCount(3);
  await expect(page.getByTestId("coefficients").locator("tbody tr")).toHaveCount(5);
  await expect(page.locator(".recharts-surface").first()).toBeVisible();
  await page.screenshot({ path: testInfo.outputPath("workbench.png"), fullPage: true });

  await page.getByRole("button", { name: "Save as draft version" }).click();
  await expect(page).toHaveURL(/\/models\/\d+\?saved=1$/);
  await expect(page.getByTestId("version-status")).toHaveText("draft");
  await expect(page.getByRole("button", { name: /^Approve version/ })).toHaveCount(0);
  await expect(page.getByText("You fitted this version, so another assessor must approve it.")).toBeVisible();
  const versionUrl = new URL(page.url()).pathname;

  const reviewer = await pageAs(second);
  await reviewer.goto(versionUrl);
  await expect(reviewer.getByTestId("comparison")).toBeVisible();
  await reviewer.getByRole("button", { name: /^Approve version/ }).click();
  await expect(reviewer.getByText("Tick the box to confirm that these forecasts will change.")).toBeVisible();
  await expect(reviewer.getByTestId("version-status")).toHaveText("draft");
  await reviewer.getByLabel(/approving changes \d+ worker forecasts? on this device type/).check();
  await reviewer.getByRole("button", { name: /^Approve version/ }).click();
  await expect(reviewer.getByRole("status")).toContainText("Approved.");
  await expect(reviewer.getByTestId("version-status")).toHaveText("approved");
  await expect(reviewer.getByTestId("approved-by")).toContainText("Rhea Lindqvist");
  const versionNumber = (await reviewer.getByRole("heading", { level: 1 }).textContent())!.match(/v(\d+)/)![1];

  await reviewer.goto("/forecast?q=HV-00001");
  await reviewer
    .getByRole("link", { name: /HV-00001/ })
    .first()
    .click();
  const card = reviewer.getByTestId("forecast-EXO-BACK");
  await expect(card.getByTestId("median")).toHaveText(/^\d+\.\d h$/);
  await expect(card.getByTestId("interval")).toHaveText(/^\d+\.\d–\d+\.\d h$/);
  await expect(card.getByTestId("planning")).toHaveText(/^\d+\.\d h$/);
  await expect(card.getByTestId("forecast-explanation")).toContainText("cohort average");
  await expect(card).toContainText(`Model v${versionNumber}`);
  await reviewer.screenshot({ path: testInfo.outputPath("worker-forecast.png"), fullPage: true });
});

for (const width of [1366, 390]) {
  test(`the workbench reads in plain words at ${width} px, with the methods in their panel`, async ({
    page,
    signInAs,
  }, testInfo) => {
    await page.setViewportSize({ width, height: 900 });
    await signInAs(page, persona("assessor").email);
    await page.goto("/models/new");
    const counts = page.getByTestId("course-counts");
    await expect(counts).toContainText("Still in training when the data was taken");
    expect(await counts.locator("tbody tr").count()).toBeGreaterThan(0);
    await page.getByLabel("Device type").selectOption({ label: "Foot-driven supernumerary finger" });
    await page.getByRole("button", { name: "Fit model" }).click();
    await expect(page.getByTestId("diagnostics")).toBeVisible();
    await expect(page.getByRole("heading", { name: "Cohort" })).toBeVisible();
    await expect(page.getByTestId("diagnostics").getByText(/\d+ past trainees with model-use consent/)).toContainText(
      "were still in training when the data was taken",
    );
    await expect(page.getByTestId("risk-group-chart")).toBeVisible();
    // Exact terms stay in the panel until it is opened.
    const panel = page.getByTestId("how-computed");
    await expect(panel.getByText(/Kalbfleisch/)).toBeHidden();
    await panel.getByText("How this was computed").click();
    await expect(panel.getByText(/Kalbfleisch/)).toBeVisible();
    await expect(panel).toContainText("Kaplan–Meier");
    await expectNoSidewaysScroll(page, width);
    await page.screenshot({ path: testInfo.outputPath(`workbench-${width}.png`), fullPage: true });
  });
}

test("a coordinator sees the hours and interval but no scores or explanation", async ({ page, signInAs }) => {
  await signInAs(page, persona("coordinator").email);
  await page.goto("/forecast?q=HV-00001");
  await page
    .getByRole("link", { name: /HV-00001/ })
    .first()
    .click();
  const card = page.getByTestId("forecast-SRF-FOOT");
  await expect(card.getByTestId("median")).toHaveText(/^\d+\.\d h$/);
  await expect(card.getByTestId("forecast-explanation")).toHaveCount(0);
  await expect(card).toContainText("visible to assessors only");
  await expect(page.getByText(/baseline z =/)).toHaveCount(0);
});

test("the progress page sends a session to the one session log, and the log moves the forecast and the chart", async ({
  page,
  signInAs,
  stack,
}, testInfo) => {
  // A session with HV-00001 on the foot device, on the trainer persona's schedule today.
  const db = sql(stack.databaseUrl);
  const w = await db("workers").where({ employee_number: "HV-00001" }).first("id");
  const foot = await db("device_types").where({ code: "SRF-FOOT" }).first("id");
  const start = new Date(Date.now() - 2 * 3_600_000);
  start.setUTCSeconds(0, 0);
  await db("training_sessions").insert({
    worker_id: w.id,
    device_type_id: foot.id,
    trainer_id: await inesTrainerId(db),
    scheduled_start: start.toISOString(),
    scheduled_end: new Date(start.getTime() + 30 * 60_000).toISOString(),
    status: "scheduled",
    created_at: new Date().toISOString(),
  });
  await signInAs(page, persona("trainer").email);
  await page.goto(`/progress/${w.id}/${foot.id}`);
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Foot-driven supernumerary finger");
  await expect(page.getByLabel("Practice time (hours)")).toHaveCount(0); // no second log form
  const rows = page.getByTestId("sessions").locator("tbody tr");
  const points = page.getByTestId("progress-chart").locator(".recharts-scatter-symbol");
  await expect(points.first()).toBeVisible();
  const sessionsBefore = await rows.count();
  const pointsBefore = await points.count();
  const remainingBefore = await page.getByTestId("remaining-median").textContent();

  await page.getByRole("link", { name: /^Log the next session with/ }).click();
  await expect(page.getByRole("heading", { name: "Adverse events" })).toBeVisible(); // the full log, with safety
  await page.getByLabel("Task score (0–1)").fill("0.72");
  await page.getByRole("button", { name: "Save session" }).click();
  await expect(page.getByRole("status")).toContainText("Session logged");
  await page.getByRole("link", { name: "Trainee's progress curve" }).click();
  await expect(rows).toHaveCount(sessionsBefore + 1);
  await expect(points).toHaveCount(pointsBefore + 1);
  await expect(page.getByTestId("remaining-median")).not.toHaveText(remainingBefore ?? "");
  await expect(rows.last()).toContainText("0.720");
  await page.screenshot({ path: testInfo.outputPath("progress-after-log.png"), fullPage: true });
});

test("the progress page works at 390 px with the chart", async ({ page, signInAs }, testInfo) => {
  await page.setViewportSize({ width: 390, height: 844 });
  await signInAs(page, persona("assessor").email);
  await page.goto("/progress");
  await page.getByRole("row").filter({ hasText: "Review" }).first().getByRole("link").click();
  await expect(page.getByTestId("review-flag")).toContainText("levels off");
  await expect(page.getByTestId("progress-chart").getByRole("application")).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("progress-390.png"), fullPage: true });
});

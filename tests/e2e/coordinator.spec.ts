import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";

test.use({ viewport: { width: 1366, height: 900 } });

// In the browser a coordinator runs an allocation on the demo scenario, watches progress,
// reads the result and the binding resources, compares two runs, publishes, and the e-mails with .ics files
// arrive at the local catcher.
test("coordinator runs, compares and publishes an allocation; workers and trainers get .ics e-mails", async ({
  page,
  signInAs,
  outbox,
}, testInfo) => {
  test.setTimeout(120_000);
  await signInAs(page, persona("coordinator").email);
  await page.goto("/coordinate/runs");
  await page.getByLabel("Name (optional)").fill("e2e baseline");
  await page.getByLabel("Horizon (weeks)").fill("6");
  await page.getByRole("button", { name: "Start the run" }).click();
  await page.waitForURL(/\/coordinate\/runs\/\d+$/);
  const baseUrl = page.url();
  const baseId = baseUrl.split("/").at(-1)!;

  // Progress (while queued or solving) gives way to the result without reloading.
  const progress = page.getByRole("progressbar");
  const result = page.getByRole("heading", { name: "Result" });
  await expect(progress.or(result).first()).toBeVisible();
  await expect(result).toBeVisible({ timeout: 60_000 });
  await expect(page.getByTestId("decision")).toContainText("people in the pool can be ready within 6 weeks");
  await expect(page.getByTestId("run-summary")).toContainText("Proven bound");
  // One capacity chart with a selector: choosing another resource redraws it with that resource's title.
  const select = page.getByTestId("capacity-select");
  const second = await select.locator("option").nth(1).getAttribute("value");
  await select.selectOption(second!);
  await expect(page.locator("figure figcaption").first()).toContainText(second!.split("|")[1]);
  await expect(page.getByRole("heading", { name: "What limits the plan" })).toBeVisible();
  await expect(page.getByTestId("plan-table")).toBeVisible();
  await expect(page.getByRole("complementary", { name: "Device safety cautions" })).toBeVisible();
  await page.screenshot({ path: testInfo.outputPath("run-result.png"), fullPage: false });

  // What-if: a shorter horizon with a wider pool, from this run; capacity binds there.
  await page.getByRole("link", { name: "Start a what-if from this run" }).click();
  await page.getByLabel("Name (optional)").fill("e2e three weeks");
  await page.getByLabel("Horizon (weeks)").fill("3");
  await page.getByLabel("Include workers already proficient on another device type").check();
  await page.getByRole("button", { name: "Start the run" }).click();
  await page.waitForURL((u) => /\/coordinate\/runs\/\d+$/.test(u.pathname) && !u.pathname.endsWith(`/${baseId}`));
  await expect(page.getByRole("heading", { name: "Result" })).toBeVisible({ timeout: 60_000 });
  await expect(page.getByTestId("binding-resources")).toContainText("One more");

  // Compare the two side by side.
  await page.getByLabel("Compare with run").selectOption(baseId);
  await page.getByRole("button", { name: "Compare side by side" }).click();
  await expect(page.getByTestId("run-compare")).toContainText("e2e baseline");
  await expect(page.getByTestId("run-compare")).toContainText("e2e three weeks");
  await page.screenshot({ path: testInfo.outputPath("compare.png"), fullPage: false });

  // Publish the baseline.
  const before = outbox.all().length;
  await page.goto(baseUrl);
  const summary = page.getByTestId("publish-summary");
  await expect(summary).toContainText("Ready after placing sessions");
  await expect(summary).toContainText("Will be e-mailed");
  const toMail = Number(await page.getByTestId("will-be-emailed").textContent());
  expect(toMail).toBeGreaterThan(0);
  // The first press without the confirmation does nothing: the box must be ticked.
  const publish = page.getByRole("button", { name: /Publish this plan|Publish again/ });
  const confirm = page.getByLabel(/I have checked the numbers/);
  await publish.click();
  expect(await confirm.evaluate((e) => (e as HTMLInputElement).validity.valueMissing)).toBe(true);
  await expect(page.getByRole("status").filter({ hasText: "Published as plan version" })).toHaveCount(0);
  expect(
    outbox
      .all()
      .slice(before)
      .filter((m) => m.subject.startsWith("Your device training")),
  ).toEqual([]);
  await confirm.check();
  await page.screenshot({ path: testInfo.outputPath("publish-confirm.png"), fullPage: false });
  await publish.click();
  const notice = page.getByRole("status").filter({ hasText: "Published as plan version" });
  await expect(notice).toBeVisible({ timeout: 60_000 });
  // Count the plan's own notices only: specs running in parallel send mail of their own meanwhile.
  const planNotices = () =>
    outbox
      .all()
      .slice(before)
      .filter((m) => m.subject.startsWith("Your device training")).length;
  await expect.poll(planNotices, { timeout: 30_000 }).toBe(toMail);
  const workerMail = await outbox.waitFor(
    (m) =>
      m.subject === "Your device training schedule" &&
      m.attachments.some((a) => a.filename.endsWith(".ics")) &&
      m.text.includes("Device training:"),
  );
  const ics = Buffer.from(workerMail.attachments.find((a) => a.filename.endsWith(".ics"))!.content, "base64").toString(
    "utf8",
  );
  expect(ics).toContain("BEGIN:VEVENT");
  expect(workerMail.text).toContain("wear-time limit");
  const trainerMail = await outbox.waitFor(
    (m) => m.text.includes("Your trainer sessions") && m.attachments.some((a) => a.filename.endsWith(".ics")),
  );
  expect(Buffer.from(trainerMail.attachments[0].content, "base64").toString("utf8")).toContain("Training session:");
  await page.screenshot({ path: testInfo.outputPath("published.png"), fullPage: false });
  await notice.getByRole("link", { name: "Open the published schedule" }).click();
  await expect(page.getByRole("heading", { name: "Published schedule" })).toBeVisible();
  await expect(page.getByTestId("schedule-table")).toBeVisible();
});

test("the run page works at 390 px wide", async ({ page, signInAs }, testInfo) => {
  await page.setViewportSize({ width: 390, height: 844 });
  await signInAs(page, persona("coordinator").email);
  await page.goto("/coordinate/runs");
  await page.getByLabel("Name (optional)").fill("e2e narrow");
  await page.getByLabel("Horizon (weeks)").fill("4");
  await page.getByRole("button", { name: "Start the run" }).click();
  await page.waitForURL(/\/coordinate\/runs\/\d+$/);
  await expect(page.getByRole("heading", { name: "Result" })).toBeVisible({ timeout: 60_000 });
  await expectNoSidewaysScroll(page, 390);
  await expect(page.getByTestId("publish-summary")).toBeVisible();
  await page.screenshot({ path: testInfo.outputPath("run-390.png"), fullPage: false });
  await page.goto("/coordinate/schedule");
  await expect(page.getByRole("heading", { name: "Published schedule" })).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
  await page.screenshot({ path: testInfo.outputPath("schedule-390.png"), fullPage: false });
});

import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";

// Issue 5, done-when: in the browser a coordinator runs an allocation on the demo scenario, watches progress,
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
  await expect(page.getByTestId("run-summary")).toContainText("Proven bound");
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
  await page.getByRole("button", { name: /Publish this plan|Publish again/ }).click();
  const notice = page.getByRole("status").filter({ hasText: "Published as plan version" });
  await expect(notice).toBeVisible({ timeout: 60_000 });
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
  expect(outbox.all().length).toBeGreaterThan(before);
  await page.screenshot({ path: testInfo.outputPath("published.png"), fullPage: false });
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
  await page.screenshot({ path: testInfo.outputPath("run-390.png"), fullPage: false });
});

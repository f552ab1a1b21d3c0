import type { Page } from "@playwright/test";
import { expect, persona, test } from "./fixtures";
import { expectNoSidewaysScroll } from "./layout";

/**
 * Never an empty frame: the planned-ready panel draws its chart with at least one line, or, where there is
 * nothing to draw (the demo publishes no plan for these departments), says why in a note instead.
 */
async function expectNoEmptyChart(page: Page) {
  const region = page.getByRole("region", { name: "Planned ready by week" });
  await expect(region).toBeVisible();
  const chart = region.locator('figure[aria-labelledby="planned-chart-caption"]');
  if ((await chart.count()) === 0) {
    await expect(region.getByRole("note")).toHaveText(/\w+ \w+ \w+/);
    await expect(region.locator('[role="img"]')).toHaveCount(0);
    return;
  }
  await expect
    .poll(() =>
      chart
        .locator("path.recharts-line-curve")
        .evaluateAll((paths) => paths.filter((p) => (p.getAttribute("d") ?? "").length > 2).length),
    )
    .toBeGreaterThan(0);
}

// The manager persona (Declan Hartley: North Yard Cable Harness and Final Assembly) in a real browser:
// sees their departments' protected readiness, the hidden symbol with its explanation, downloads the
// XLSX, and the page works at 390 px. Screenshots go to test-results/e2e/.
test("manager sees protected readiness for their departments and exports it", async ({ page, signInAs }, testInfo) => {
  const landed = await signInAs(page, persona("manager").email);
  expect(new URL(landed).pathname).toBe("/readiness");
  await expect(page.getByRole("heading", { name: "Department readiness" })).toBeVisible();
  await expect(page.getByText("North Yard: Cable Harness, Final Assembly")).toBeVisible();

  const stage = page.getByTestId("stage-table-department");
  await expect(stage.getByRole("rowheader", { name: "North Yard · Cable Harness" })).toBeVisible();
  await expect(stage.getByRole("rowheader", { name: "North Yard · Final Assembly" })).toBeVisible();
  // No other department is on the page.
  await expect(page.getByText("Kitting")).toHaveCount(0);
  // Every shown count in the stage table is 0 or at least 5 (threshold of the demo organisation).
  const values = await stage.locator("tbody td").allInnerTexts();
  for (const v of values) {
    if (v.includes("hidden")) continue;
    const n = Number(v.replace(/[^0-9]/g, ""));
    expect(n === 0 || n >= 5, `cell ${v}`).toBe(true);
  }
  await expectNoEmptyChart(page);
  await page.screenshot({ path: testInfo.outputPath("manager-home-desktop.png"), fullPage: true });

  const download = page.waitForEvent("download");
  await page.getByRole("link", { name: "Download these tables (XLSX)" }).click();
  const file = await download;
  expect(file.suggestedFilename()).toMatch(/^limberly-readiness-\d{4}-\d{2}-\d{2}\.xlsx$/);

  await page.setViewportSize({ width: 390, height: 900 });
  await expect(page.getByRole("heading", { name: "People by readiness stage" })).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
  await expectNoEmptyChart(page);
  await page.screenshot({ path: testInfo.outputPath("manager-home-390.png"), fullPage: true });
});

test("a department manager's site view adds up their departments per site, and no table scrolls at 1366 px", async ({
  page,
  signInAs,
}, testInfo) => {
  await signInAs(page, persona("manager").email);
  await page.setViewportSize({ width: 1366, height: 900 });
  for (const path of ["/readiness", "/readiness/sites"]) {
    await page.goto(path);
    // Each table fits the card it sits in (common practice for dashboards: no sideways scrolling at a laptop width).
    const overflowing = await page.evaluate(() =>
      [...document.querySelectorAll("table")]
        .filter((t) => t.scrollWidth > (t.parentElement?.clientWidth ?? 0) + 1)
        .map((t) => t.caption?.textContent ?? "a table"),
    );
    expect(overflowing, path).toEqual([]);
    if (path === "/readiness") await expectNoEmptyChart(page);
  }
  await expect(page.getByRole("heading", { name: "Site readiness" })).toBeVisible();
  const stage = page.getByTestId("stage-table-site");
  await expect(stage.getByRole("rowheader", { name: "North Yard (your departments)" })).toBeVisible();
  await expect(page.getByText("Kitting")).toHaveCount(0);
  await page.screenshot({ path: testInfo.outputPath("manager-sites-desktop.png"), fullPage: true });
  await page.setViewportSize({ width: 390, height: 900 });
  await expect(page.getByTestId("stage-table-site-cards").getByText("North Yard (your departments)")).toBeVisible();
  await expectNoSidewaysScroll(page, 390);
});

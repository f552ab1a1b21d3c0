import { expect, persona, test } from "./fixtures";
import { expectChartsFitTheirFrames } from "./layout";

// Charts size themselves with CSS (recharts' `responsive` charts), so a narrower column narrows every chart
// in the same layout pass; a chart drawn at a fixed pixel width would keep its old width until a
// ResizeObserver and a render caught up, and in that moment widen the page (the flaky 390 px checks).
// The worker's home always has a progress chart in the demo: the content column is narrowed to 390 px
// and measured in the same task, before any script could have redrawn a chart.
test("charts follow a narrower column at once and never widen the page", async ({ page, signInAs }) => {
  await signInAs(page, persona("worker").email);
  const surfaces = page.locator(".recharts-wrapper > svg.recharts-surface");
  await expect(surfaces.first()).toBeVisible();
  await expectChartsFitTheirFrames(page);
  const measured = await page.evaluate(() => {
    const main = document.getElementById("main")!;
    const before = [...document.querySelectorAll(".recharts-wrapper > svg.recharts-surface")].map(
      (s) => s.getBoundingClientRect().width,
    );
    main.style.maxWidth = "390px";
    main.style.boxSizing = "border-box";
    const after = [...document.querySelectorAll(".recharts-wrapper > svg.recharts-surface")].map(
      (s) => s.getBoundingClientRect().right - main.getBoundingClientRect().left,
    );
    return { before, after, column: main.clientWidth, content: main.scrollWidth };
  });
  expect(measured.column).toBe(390);
  // The charts were wider than the new column before it narrowed …
  expect(Math.max(...measured.before)).toBeGreaterThan(390);
  // … and in the same task no chart reaches past it, nor does anything else in the column.
  for (const right of measured.after) expect(right).toBeLessThanOrEqual(390);
  expect(measured.content).toBeLessThanOrEqual(390);
});

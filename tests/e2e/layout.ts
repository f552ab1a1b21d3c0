import { expect, type Page } from "@playwright/test";

// Charts measure their frame and redraw when it changes size (a ResizeObserver, then a React render), so
// just after a viewport change or the first paint a chart can still be drawn at its old or initial width.
// Wait for that condition to end, then for the page to fit: never a fixed sleep.

/** Every chart is drawn no wider than the frame it sits in. */
export async function expectChartsFitTheirFrames(page: Page): Promise<void> {
  await expect
    .poll(
      () =>
        page.evaluate(() =>
          // The chart's own drawing surface (legend icons are small surfaces of their own).
          [...document.querySelectorAll(".recharts-wrapper > svg.recharts-surface")]
            .map((chart) => {
              const frame = chart.closest('[role="img"]') ?? chart.parentElement;
              return { chart: chart.getBoundingClientRect().width, frame: frame?.clientWidth ?? 0 };
            })
            .filter((w) => w.chart > w.frame + 0.5),
        ),
      { message: "charts drawn wider than their frames" },
    )
    .toEqual([]);
}

/** The page does not scroll sideways at `width` px: charts have redrawn and the document fits. */
export async function expectNoSidewaysScroll(page: Page, width: number): Promise<void> {
  await expectChartsFitTheirFrames(page);
  await expect
    .poll(() => page.evaluate(() => document.documentElement.clientWidth), { message: "viewport width" })
    .toBe(width);
  await expect
    .poll(() => page.evaluate(() => document.documentElement.scrollWidth), {
      message: "document.documentElement.scrollWidth",
    })
    .toBeLessThanOrEqual(width);
}

// Playwright configuration for Limberly's end-to-end tests (tests/e2e/*.spec.ts).
// The global setup migrates and seeds a fresh SQLite file in a temp folder and starts the real stack
// (built app, identity-provider stand-in, SMTP catcher) on the ports in ./ports.ts; build first:
//   npx react-router build && npx playwright test --config tests/e2e/playwright.config.ts
import path from "node:path";
import { fileURLToPath } from "node:url";
import { defineConfig, devices } from "@playwright/test";
import { e2ePorts } from "./ports";

const here = path.dirname(fileURLToPath(import.meta.url));
const root = path.resolve(here, "../..");

export default defineConfig({
  testDir: here,
  testMatch: "**/*.spec.ts",
  // Screenshots, traces and saved artefacts; test-results/ is git-ignored. A run on other ports
  // (E2E_APP_PORT) gets its own folder so parallel runs do not wipe each other's results.
  outputDir: path.join(root, "test-results", e2ePorts.app === 3400 ? "e2e" : `e2e-${e2ePorts.app}`),
  globalSetup: path.join(here, "global-setup.ts"),
  fullyParallel: true,
  workers: 2,
  retries: 0,
  forbidOnly: true,
  timeout: 45_000,
  // A bound on the whole run (a hung stack), with room for a busy 2-core machine.
  globalTimeout: 15 * 60_000,
  expect: { timeout: 10_000 },
  reporter: "list",
  use: {
    ...devices["Desktop Chrome"],
    baseURL: `http://localhost:${e2ePorts.app}`,
    headless: true,
    screenshot: "only-on-failure",
    trace: "retain-on-failure",
    actionTimeout: 10_000,
    navigationTimeout: 20_000,
    launchOptions: {
      // Debian's Chromium; never a downloaded browser.
      executablePath: "/usr/bin/chromium",
      args: [
        "--no-sandbox",
        "--disable-gpu",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
      ],
    },
  },
  projects: [{ name: "chromium" }],
});

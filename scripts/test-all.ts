// `npm test`: everything a newcomer and CI run. Makes sure Debian's Chromium is there (installs it when
// running as root, otherwise prints the command), type-checks, lints (Biome), builds, then runs the unit and reference
// tests, the integration tests against the real stack, and the Playwright end-to-end tests.
// Ends with one line "N passed, N failed" over all suites.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const root = path.resolve(path.dirname(new URL(import.meta.url).pathname), "..");
const out = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-test-"));
const bin = (p: string) => path.join(root, "node_modules", p);

function run(label: string, args: string[], env: NodeJS.ProcessEnv = {}): number {
  console.log(`\n━━ ${label} ━━`);
  const r = spawnSync(process.execPath, args, { cwd: root, stdio: "inherit", env: { ...process.env, ...env } });
  return r.status ?? 1;
}

function ensureChromium(): void {
  if (fs.existsSync("/usr/bin/chromium")) return;
  const cmd = "apt-get update && apt-get install -y chromium";
  if (process.getuid?.() === 0) {
    console.log(`Chromium is missing: installing Debian's package (${cmd})`);
    const r = spawnSync("bash", ["-c", `DEBIAN_FRONTEND=noninteractive ${cmd}`], { stdio: "inherit" });
    if (r.status === 0 && fs.existsSync("/usr/bin/chromium")) return;
  }
  console.error(
    `\nThe end-to-end tests need Debian's Chromium at /usr/bin/chromium. Install it with:\n  sudo ${cmd}\n`,
  );
  process.exit(1);
}

ensureChromium();
const failures: string[] = [];
if (run("typegen", [bin("@react-router/dev/bin.js"), "typegen"]) !== 0) failures.push("typegen");
if (run("tsc --noEmit", [bin("typescript/bin/tsc"), "--noEmit"]) !== 0) failures.push("tsc");
if (run("biome check", [bin("@biomejs/biome/bin/biome"), "check", "--error-on-warnings", "."]) !== 0)
  failures.push("biome");
if (run("build", [bin("@react-router/dev/bin.js"), "build"]) !== 0) {
  console.error("The build failed; the integration and end-to-end tests need it.");
  console.log("\n0 passed, 1 failed");
  process.exit(1);
}

const vitestJson = path.join(out, "vitest.json");
const vitestCode = run("unit, reference and integration tests (vitest)", [
  bin("vitest/vitest.mjs"),
  "run",
  "--config",
  "tests/vitest.config.ts",
  "--reporter=default",
  "--reporter=json",
  `--outputFile.json=${vitestJson}`,
]);
const e2eJson = path.join(out, "e2e.json");
const e2eCode = run(
  "end-to-end tests (Playwright, Debian Chromium)",
  [bin("@playwright/test/cli.js"), "test", "--config", "tests/e2e/playwright.config.ts", "--reporter=list,json"],
  { PLAYWRIGHT_JSON_OUTPUT_NAME: e2eJson },
);

let passed = 0;
let failed = 0;
if (fs.existsSync(vitestJson)) {
  const v = JSON.parse(fs.readFileSync(vitestJson, "utf8"));
  passed += v.numPassedTests ?? 0;
  failed += (v.numFailedTests ?? 0) + (v.numFailedTestSuites ?? 0);
} else failed += 1;
if (fs.existsSync(e2eJson)) {
  const e = JSON.parse(fs.readFileSync(e2eJson, "utf8"));
  passed += e.stats?.expected ?? 0;
  failed += (e.stats?.unexpected ?? 0) + (e.stats?.flaky ?? 0) + (e.errors?.length ?? 0);
} else failed += 1;
if (vitestCode !== 0 && failed === 0) failed += 1;
if (e2eCode !== 0 && failed === 0) failed += 1;
failed += failures.length;
if (failures.length) console.log(`\nChecks that failed: ${failures.join(", ")}`);
console.log(`\n${passed} passed, ${failed} failed`);
process.exit(failed === 0 ? 0 : 1);

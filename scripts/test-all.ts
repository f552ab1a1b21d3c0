// `npm test`: everything a newcomer and CI run. Makes sure Debian's Chromium and PostgreSQL packages are there
// (installs them when running as root, otherwise prints the command), type-checks, lints (Biome), builds, then
// runs the unit and reference tests, the integration tests against the real stack twice (on SQLite, then on a
// throwaway PostgreSQL cluster), and the Playwright end-to-end tests.
// Ends with one line "N passed, N failed" over all suites.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { ensurePostgres } from "./postgres";

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
try {
  ensurePostgres();
} catch (e) {
  console.error(`\n${(e as Error).message}\n`);
  process.exit(1);
}
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

// Vitest: unit + reference and the integration project on SQLite in one run, then the integration project
// again on PostgreSQL (LIMBERLY_TEST_DB, see tests/integration/global-setup.ts).
const vitestRuns = [
  { label: "unit, reference and integration tests on SQLite (vitest)", file: "vitest-sqlite.json", db: "sqlite" },
  { label: "integration tests on PostgreSQL (vitest)", file: "vitest-postgres.json", db: "postgres" },
].map((v) => {
  const json = path.join(out, v.file);
  // The engine-parity test seeds both engines itself; it runs once, in the PostgreSQL pass.
  const projects =
    v.db === "sqlite"
      ? ["--project", "unit", "--project", "integration", "--exclude", "tests/integration/engine-parity.test.ts"]
      : ["--project", "integration"];
  const code = run(
    v.label,
    [
      bin("vitest/vitest.mjs"),
      "run",
      "--config",
      "tests/vitest.config.ts",
      ...projects,
      "--reporter=default",
      "--reporter=json",
      `--outputFile.json=${json}`,
    ],
    { LIMBERLY_TEST_DB: v.db },
  );
  return { json, code };
});
const e2eJson = path.join(out, "e2e.json");
const e2eCode = run(
  "end-to-end tests (Playwright, Debian Chromium)",
  [bin("@playwright/test/cli.js"), "test", "--config", "tests/e2e/playwright.config.ts", "--reporter=list,json"],
  { PLAYWRIGHT_JSON_OUTPUT_NAME: e2eJson },
);

let passed = 0;
let failed = 0;
for (const v of vitestRuns) {
  if (fs.existsSync(v.json)) {
    const r = JSON.parse(fs.readFileSync(v.json, "utf8"));
    passed += r.numPassedTests ?? 0;
    // Failed tests, plus files that failed without a failing test (an error while loading or in a hook);
    // numFailedTestSuites would count each describe block of a failing test again.
    const brokenFiles = (r.testResults ?? []).filter(
      (f: { status: string; assertionResults?: { status: string }[] }) =>
        f.status === "failed" && !(f.assertionResults ?? []).some((a) => a.status === "failed"),
    ).length;
    failed += (r.numFailedTests ?? 0) + brokenFiles;
  } else failed += 1;
  if (v.code !== 0 && failed === 0) failed += 1;
}
if (fs.existsSync(e2eJson)) {
  const e = JSON.parse(fs.readFileSync(e2eJson, "utf8"));
  passed += e.stats?.expected ?? 0;
  failed += (e.stats?.unexpected ?? 0) + (e.stats?.flaky ?? 0) + (e.errors?.length ?? 0);
} else failed += 1;
if (e2eCode !== 0 && failed === 0) failed += 1;
failed += failures.length;
if (failures.length) console.log(`\nChecks that failed: ${failures.join(", ")}`);
console.log(`\n${passed} passed, ${failed} failed`);
process.exit(failed === 0 ? 0 : 1);

// Assessor e2e ("done when"): in the browser an assessor imports a roster file with bad rows and
// sees them named, records consent, enters a manual test, uploads each of the five trace kinds and sees
// the computed values and the profile chart, then withdraws consent — and the worker's assessment rows
// are gone, in the page and in the database. Uses the generated files in seeds/traces (invented data).
import path from "node:path";
import { fileURLToPath } from "node:url";
import Database from "better-sqlite3";
import { expect, persona, test } from "./fixtures";

const TRACES = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../seeds/traces");

test("assessor: roster with bad rows, consent, manual test, five traces, profile chart, withdrawal erases", async ({
  page,
  signInAs,
  stack,
}, testInfo) => {
  test.setTimeout(120_000);
  await signInAs(page, persona("assessor").email);

  // Roster: upload, preview with the bad rows named, import the valid ones.
  await page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Roster import" }).click();
  await page.getByLabel("Roster file").setInputFiles(path.join(TRACES, "roster-demo.csv"));
  await page.getByRole("button", { name: "Upload and map columns" }).click();
  const preview = page.getByTestId("roster-preview");
  await expect(preview.getByTestId("preview-counts")).toHaveText(
    "11 rows: 4 new, 1 to update, 0 unchanged, 6 with errors (skipped).",
  );
  const issues = preview.getByTestId("issue-list");
  await expect(issues).toContainText("Row 7, Employee number: employee number is missing");
  await expect(issues).toContainText("Row 8, E-mail: not a valid e-mail address");
  await expect(issues).toContainText('Row 9, Site: unknown site "Westmoor"');
  await expect(issues).toContainText('Row 10, Department: unknown department "Welding" at Eastgate');
  await expect(issues).toContainText(
    "Row 11, Employee number: employee number HV-90001 appears twice in the file (first on row 2)",
  );
  await page.screenshot({ path: testInfo.outputPath("roster-preview.png"), fullPage: true });
  await page.getByRole("button", { name: "Import 5 valid row(s)" }).click();
  await expect(page.getByTestId("import-summary")).toContainText(
    "4 new workers · 1 updated · 0 unchanged · 6 rows skipped for errors",
  );

  // Worker list → the new worker's record.
  await page.getByRole("link", { name: "Go to the worker list" }).click();
  await page.getByLabel("Name or employee number").fill("HV-90004");
  await page.getByRole("button", { name: "Filter", exact: true }).first().click();
  await page.getByRole("link", { name: "HV-90004" }).click();
  await expect(page.getByTestId("worker-name")).toHaveText("Dmitri Quayle");
  await expect(page.getByTestId("consent-assessment")).toHaveText("not given");
  await expect(
    page.getByText("No assessment can be recorded: this worker has not given assessment consent."),
  ).toBeVisible();

  // Consent, witnessed by the second assessor.
  await page.getByLabel("Witnessed by (assessor)").selectOption({ label: persona("assessor").displayName });
  // Each purpose is ticked by hand: consent is an affirmative act, nothing is pre-ticked.
  for (const box of await page.getByRole("checkbox", { name: /text v\d/ }).all()) {
    await expect(box).not.toBeChecked();
    await box.check();
  }
  await page.getByLabel("The worker was shown the current text of each ticked purpose and agreed.").check();
  await page.getByRole("button", { name: "Record consent" }).click();
  await expect(page.getByRole("status")).toContainText("Consent recorded for: assessment, planning, model.");
  await expect(page.getByTestId("consent-assessment")).toHaveText("given (v1.0)");

  // Session, a manual test (with a comma typo first), and the five traces.
  await page.getByRole("button", { name: "Start assessment session" }).click();
  await expect(page.getByRole("heading", { level: 1 })).toContainText("Assessment session of");
  await page.getByLabel(/^Pegboard, dominant hand/).fill("16,5");
  await page.getByRole("button", { name: "Save scores" }).click();
  await expect(page.getByText('Pegboard, dominant hand: "16,5" is not a number (use a decimal point).')).toBeVisible();
  await page.getByLabel(/^Pegboard, dominant hand/).fill("16");
  await page.getByRole("button", { name: "Save scores" }).click();
  // The saved scores are confirmed, and the forecast says why there is none yet (the battery is incomplete).
  await expect(page.getByRole("status")).toContainText("1 score(s) saved.");
  await expect(page.getByRole("status")).toContainText("No forecast: the baseline lacks");

  const expected: Record<string, RegExp> = {
    sway: /Sway 95 % prediction-ellipse area/,
    tracking: /Tracking lag\s*0\.2000 s/,
    glove: /Hand: joint channels recorded\s*22 count/,
    timing: /Timing: missed cues\s*1 count/,
    force: /Force grading R²/,
  };
  const results = page.getByTestId("results-table").locator("tbody tr");
  for (const [i, kind] of ["sway", "tracking", "glove", "timing", "force"].entries()) {
    await page.getByLabel("Trace kind").selectOption(kind);
    await page.getByLabel("Trace file").setInputFiles(path.join(TRACES, `${kind}.csv`));
    await page.getByRole("button", { name: "Upload and compute" }).click();
    const result = page.getByTestId("upload-result");
    await expect(result).toContainText(`${kind}.csv: ${kind} trace`);
    await expect(result).toContainText(expected[kind]);
    if (kind === "sway") {
      // The processing before the measures is stated with the result, the method and sources beside it.
      await expect(page.getByTestId("upload-processing")).toContainText(
        "recorded at 100.0 Hz, resampled to 100 Hz, low-pass 10 Hz",
      );
      await page.getByText("How the sway measures were computed").click();
      await expect(page.getByTestId("sway-how-computed")).toContainText("Prieto et al. (1996)");
    }
    // Two measures per trace kind join the manual score: wait for the reloaded table before the next upload.
    await expect(results).toHaveCount(1 + 2 * (i + 1));
    if (kind === "glove") await page.screenshot({ path: testInfo.outputPath("upload-result.png"), fullPage: true });
  }
  // A bad file: the parse error names row and column, nothing stored.
  await page.getByLabel("Trace kind").selectOption("sway");
  await page.getByLabel("Trace file").setInputFiles(path.join(TRACES, "sway-bad-time.csv"));
  await page.getByRole("button", { name: "Upload and compute" }).click();
  await expect(page.getByTestId("issue-list")).toContainText(
    "Row 502, t: time 4.9 is not after the previous time 4.99 (row 501); times must increase",
  );
  await expect(results).toHaveCount(11);

  // Back to the record: profile chart and its table.
  await page.getByRole("link", { name: /Dmitri Quayle \(HV-90004\)/ }).click();
  await expect(page.locator("figure .recharts-surface")).toBeVisible();
  await expect(page.getByTestId("profile-table").locator("tbody tr")).toHaveCount(11);
  await page.screenshot({ path: testInfo.outputPath("worker-record.png"), fullPage: true });
  const workerId = Number(new URL(page.url()).pathname.split("/").pop());

  // Withdraw assessment consent: erased at once.
  // Given consent is a summary; the withdrawal is behind "Change", with the same confirmation the worker sees.
  const consent = page.getByTestId("consent-section");
  await consent.getByText("Change (withdraw a consent)").click();
  const withdraw = consent.getByTestId("withdraw-assessment");
  await withdraw.getByText("Withdraw assessment consent…").click();
  await expect(withdraw).toContainText("The erasure cannot be undone: erased data do not come back.");
  const box = withdraw.getByLabel("I understand: this takes effect at once, and the erasure cannot be undone.");
  await expect(box).not.toBeChecked();
  await box.check();
  await withdraw.getByRole("button", { name: "Withdraw assessment consent" }).click();
  await expect(page.getByRole("status")).toContainText(
    "Assessment consent withdrawn. Erased at once (rows deleted): assessment results: 11, trace uploads: 5, assessment sessions: 1",
  );
  await expect(page.getByTestId("consent-assessment")).toHaveText("withdrawn");
  await expect(page.getByText("No z-scores yet")).toBeVisible();

  const dbFile = stack.databaseUrl.replace(/^file:/, "");
  const sql = new Database(dbFile, { readonly: true, fileMustExist: true });
  try {
    const count = (q: string) => (sql.prepare(q).get(workerId) as { n: number }).n;
    expect(count("select count(*) as n from assessment_sessions where worker_id = ?")).toBe(0);
    expect(
      count(
        "select count(*) as n from trace_uploads t join assessment_sessions s on s.id = t.session_id where s.worker_id = ?",
      ),
    ).toBe(0);
    expect(
      count(
        "select count(*) as n from assessment_results r join assessment_sessions s on s.id = r.session_id where s.worker_id = ?",
      ),
    ).toBe(0);
    expect(
      sql
        .prepare(
          "select status, given_at, witness_user_id from consent_records where worker_id = ? and purpose = 'assessment'",
        )
        .all(workerId),
    ).toEqual([{ status: "withdrawn", given_at: null, witness_user_id: null }]);
  } finally {
    sql.close();
  }
});

for (const [role, paths] of [
  ["coordinator", ["/assess/workers/1", "/assess/workers/1/sessions/1", "/assess/measures", "/assess/reliability"]],
  ["manager", ["/assess/workers", "/assess/workers/1", "/assess/roster", "/assess/norms"]],
] as const) {
  test(`${role} is refused assessment pages (403)`, async ({ page, signInAs }) => {
    await signInAs(page, persona(role).email);
    for (const p of paths) {
      const res = await page.goto(p);
      expect(res?.status(), p).toBe(403);
      await expect(page.getByText("Coordination profile")).toHaveCount(0);
    }
  });
}

// The season of tests/integration/programme-season.test.ts, timed: the 26 weeks through the app's routes on
// SQLite against the target of 3 minutes (stack start-up, migration and seeding are timed apart).
// Run: npx tsx bench/season.ts — prints the season's checks and one timing table; exits non-zero on a FAIL.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { runSeasonOnce } from "../scripts/season/run";

const TARGET_S = 180;

export async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-season-bench-"));
  try {
    const t0 = performance.now();
    const r = await runSeasonOnce({ dir, databaseUrl: path.join(dir, "season.sqlite") });
    const total = (performance.now() - t0) / 1000;
    console.log(r.table);
    const rows = [
      { name: "26 simulated weeks through the app", seconds: r.seconds, target: TARGET_S },
      { name: "  with stack start, migration and seed", seconds: total, target: null },
      ...Object.entries(r.log.phases).map(([phase, ms]) => ({ name: `  ${phase}`, seconds: ms / 1000, target: null })),
    ];
    console.table(
      rows.map((x) => ({
        name: x.name,
        seconds: Number(x.seconds.toFixed(1)),
        target: x.target == null ? "" : `< ${x.target}`,
        result: x.target == null ? "" : x.seconds < x.target ? "pass" : "FAIL",
      })),
    );
    const ok = r.seconds < TARGET_S && r.checks.every((c) => c.ok);
    process.exitCode = ok ? 0 : 1;
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

await main();

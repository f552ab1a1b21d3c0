import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { cohortSize, SEASON } from "../../scripts/season/parameters";
import { runSeasonOnce } from "../../scripts/season/run";
import { freshDatabase } from "./helpers";

// A season in the life of a programme (scripts/season/): an invented cohort at two sites runs 26 weeks through
// the app's own routes, on a stack of its own whose clock moves week by week. Its speed is bench/season.ts's.
describe("a season in the life of a training programme", () => {
  it("takes every worker to a final state with no double booking, the right e-mail and one access-log row per read", async () => {
    const db = await freshDatabase("season");
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-season-it-"));
    try {
      const r = await runSeasonOnce({ dir, databaseUrl: db.url });
      expect(cohortSize()).toBeGreaterThanOrEqual(120);
      expect(r.log.hires).toHaveLength(cohortSize());
      expect(r.log.runs).toHaveLength(SEASON.weeks);
      const failed = r.checks.filter((c) => !c.ok);
      expect(failed, r.table).toEqual([]);
      const found = (name: string) => r.checks.find((c) => c.check.startsWith(name))?.found;
      expect(found("stuck")).toBe(0);
      expect(found("withdrawn")).toBe(SEASON.withdrawalWeeks.length);
      expect(found("severe events logged")).toBe(SEASON.severeEventWeeks.length);
    } finally {
      await db.drop();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }, 900_000);
});

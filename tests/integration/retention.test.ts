import { describe, expect, it } from "vitest";
import { purgeExpiredAssessments, retentionCutoff } from "../../app/jobs/retention.server";
import { freshDatabase } from "./helpers";
import { migrationSource, runSeed } from "./migration-source";

// Retention purge on its own database (it deletes rows, so not on the shared test stack).
describe("retention purge", () => {
  it("computes the cut-off by calendar days", () => {
    expect(retentionCutoff("2026-12-01", 365)).toBe("2025-12-01");
    expect(retentionCutoff("2024-03-01", 1)).toBe("2024-02-29"); // leap year
  });

  it("deletes only assessments older than the retention period, with their results and traces", async () => {
    const fresh = await freshDatabase("ret");
    const k = fresh.knex;
    try {
      await k.migrate.latest({ migrationSource });
      await runSeed(k);
      await k("organisations").update({ retention_days: 365 });
      const worker = await k("workers").first("id");
      const now = new Date().toISOString();
      const [measure] = await k("measures")
        .insert({
          code: "test.ret",
          name: "Retention probe",
          unit: "s",
          higher_is_better: false,
          entry: "manual",
          created_at: now,
        })
        .returning("id");
      const session = async (day: string) =>
        (
          await k("assessment_sessions")
            .insert({ worker_id: worker.id, assessed_on: day, created_at: now })
            .returning("id")
        )[0].id;
      const old = await session("2025-06-01");
      const recent = await session("2026-06-01");
      for (const s of [old, recent]) {
        const [t] = await k("trace_uploads")
          .insert({
            session_id: s,
            kind: "sway",
            filename: "x.csv",
            sha256: "0".repeat(64),
            size_bytes: 1,
            row_count: 1,
            computed: "{}",
            created_at: now,
          })
          .returning("id");
        await k("assessment_results").insert({
          session_id: s,
          measure_id: measure.id,
          value: 1,
          trace_upload_id: t.id,
          created_at: now,
        });
      }
      const summary = await purgeExpiredAssessments("2026-12-01", k);
      expect(summary).toEqual({ cutoff: "2025-12-01", assessmentSessions: 1, traceUploads: 1, results: 1 });
      expect(await k("assessment_sessions").pluck("id")).toEqual([recent]);
      expect(await k("assessment_results").count({ n: "*" }).first()).toEqual({ n: 1 });
    } finally {
      await fresh.drop();
    }
  });
});

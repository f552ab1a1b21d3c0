import { describe, expect, it } from "vitest";
import { engine, freshDatabase, tableNames } from "./helpers";
import { migrationSource, runSeed } from "./migration-source";

// Every migration goes down and up again cleanly on the engine under test, and the demo seed runs on the result.
describe("migrations", () => {
  it("run up, all the way down, and up again; the seed then loads", async () => {
    const fresh = await freshDatabase("mig");
    const k = fresh.knex;
    try {
      const [, applied] = await k.migrate.latest({ migrationSource });
      expect(applied.length).toBeGreaterThanOrEqual(2);
      const up = await tableNames(k);
      expect(up).toEqual(
        expect.arrayContaining([
          "workers",
          "consent_records",
          "access_log",
          "device_types",
          "trainers",
          "api_keys",
          "sessions",
          "role_assignments",
        ]),
      );
      const [, undone] = await k.migrate.rollback({ migrationSource }, true);
      expect(undone.length).toBe(applied.length);
      expect(await tableNames(k)).toEqual([]);
      await k.migrate.latest({ migrationSource });
      expect(await tableNames(k)).toEqual(up);
      await runSeed(k);
      expect(Number((await k("workers").count({ n: "*" }).first())!.n)).toBeGreaterThanOrEqual(300);
      if (engine() === "sqlite") {
        expect((await k.raw("pragma foreign_keys"))[0].foreign_keys).toBe(1);
        expect((await k.raw("pragma journal_mode"))[0].journal_mode).toBe("wal");
      } else {
        // Measures are doubles and session times wall-clock (zone-less) on PostgreSQL.
        const cols = await k.raw(
          "select table_name, column_name, data_type from information_schema.columns where table_schema = current_schema() and (data_type = 'real' or (table_name = 'training_sessions' and column_name like 'scheduled_%'))",
        );
        expect(cols.rows).toEqual(
          expect.arrayContaining([
            {
              table_name: "training_sessions",
              column_name: "scheduled_start",
              data_type: "timestamp without time zone",
            },
            { table_name: "training_sessions", column_name: "scheduled_end", data_type: "timestamp without time zone" },
          ]),
        );
        expect(cols.rows.filter((c: { data_type: string }) => c.data_type === "real")).toEqual([]);
      }
    } finally {
      await fresh.drop();
    }
  });

  it("keeps stored values when measures become doubles and session times become wall-clock", async () => {
    const fresh = await freshDatabase("mig_values");
    const k = fresh.knex;
    try {
      const names = await migrationSource.getMigrations([]);
      const target = names.indexOf("20261203000100_doubles_and_wall_clock_sessions.ts");
      expect(target).toBeGreaterThan(0);
      for (let i = 0; i < target; i++) await k.migrate.up({ migrationSource });
      const at = "2026-11-30T09:00:00.000Z";
      const [org] = await k("organisations").insert({ name: "Probe", created_at: at }).returning("id");
      const [site] = await k("sites")
        .insert({ organisation_id: org.id, code: "P", name: "P", created_at: at })
        .returning("id");
      const [dept] = await k("departments")
        .insert({ site_id: site.id, code: "D", name: "D", created_at: at })
        .returning("id");
      const [worker] = await k("workers")
        .insert({
          employee_number: "P1",
          given_name: "A",
          family_name: "B",
          site_id: site.id,
          department_id: dept.id,
          created_at: at,
          updated_at: at,
        })
        .returning("id");
      const [dt] = await k("device_types")
        .insert({ code: "p", name: "Probe", category: "exoskeleton", created_at: at })
        .returning("id");
      // A logged session (written with "Z") and a published one (written without zone, as publishing does;
      // the PostgreSQL test cluster runs in Europe/Berlin, so a zone-less write lands an hour off as an instant).
      await k("training_sessions").insert([
        {
          worker_id: worker.id,
          device_type_id: dt.id,
          scheduled_start: "2026-12-07T09:00:00.000Z",
          scheduled_end: "2026-12-07T09:45:00.000Z",
          duration_hours: 0.1,
          created_at: at,
        },
        {
          worker_id: worker.id,
          device_type_id: dt.id,
          allocation_run_id: 1,
          scheduled_start: "2026-12-08T14:00:00",
          scheduled_end: "2026-12-08T14:45:00",
          created_at: at,
        },
      ]);
      await k.migrate.latest({ migrationSource });
      // The column default (0.8) and a stored value (0.1) read back as the decimals they were, not as widened reals.
      expect(await k("organisations").first("planning_quantile", "created_at")).toEqual({
        planning_quantile: 0.8,
        created_at: at,
      });
      expect(
        await k("training_sessions").select("scheduled_start", "scheduled_end", "duration_hours").orderBy("id"),
      ).toEqual([
        { scheduled_start: "2026-12-07T09:00:00", scheduled_end: "2026-12-07T09:45:00", duration_hours: 0.1 },
        { scheduled_start: "2026-12-08T14:00:00", scheduled_end: "2026-12-08T14:45:00", duration_hours: null },
      ]);
    } finally {
      await fresh.drop();
    }
  });
});

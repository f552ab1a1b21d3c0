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
});

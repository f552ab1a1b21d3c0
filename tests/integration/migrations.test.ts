import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import knex from "knex";
import { describe, expect, it } from "vitest";
import { knexConfig } from "../../knexfile";
import { migrationSource, runSeed } from "./migration-source";

// Every migration goes down and up again cleanly on SQLite, and the demo seed runs on the result.
describe("migrations", () => {
  it("run up, all the way down, and up again; the seed then loads", async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-mig-"));
    const k = knex(knexConfig({ DATABASE_URL: path.join(dir, "m.sqlite") }));
    const tables = async () =>
      (
        await k.raw(
          "select name from sqlite_master where type='table' and name not like 'knex_%' and name not like 'sqlite_%' order by name",
        )
      ).map((r: { name: string }) => r.name);
    try {
      const [, applied] = await k.migrate.latest({ migrationSource });
      expect(applied.length).toBeGreaterThanOrEqual(2);
      const up = await tables();
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
      expect(await tables()).toEqual([]);
      await k.migrate.latest({ migrationSource });
      expect(await tables()).toEqual(up);
      await runSeed(k);
      expect(Number((await k("workers").count({ n: "*" }).first())!.n)).toBeGreaterThanOrEqual(300);
      expect((await k.raw("pragma foreign_keys"))[0].foreign_keys).toBe(1);
      expect((await k.raw("pragma journal_mode"))[0].journal_mode).toBe("wal");
    } finally {
      await k.destroy();
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

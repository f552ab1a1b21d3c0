import fs from "node:fs";
import path from "node:path";
import type { Knex } from "knex";

// Loads migrations through Vitest's module loader (Node alone cannot import .ts files), for tests that
// migrate their own throw-away database.
const dir = path.resolve(__dirname, "../../migrations");

export const migrationSource: Knex.MigrationSource<string> = {
  async getMigrations() {
    return fs
      .readdirSync(dir)
      .filter((f) => f.endsWith(".ts"))
      .sort();
  },
  getMigrationName(name) {
    return name;
  },
  async getMigration(name) {
    return import(/* @vite-ignore */ path.join(dir, name));
  },
};

export async function runSeed(k: Knex, file = "01_demo_scenario.ts"): Promise<void> {
  const mod = await import(/* @vite-ignore */ path.resolve(__dirname, "../../seeds", file));
  await mod.seed(k);
}

// Database maintenance: `tsx scripts/migrate.ts latest|rollback|seed|reset`.

import fs from "node:fs";
import path from "node:path";
import knex from "knex";
import { knexConfig } from "../knexfile";

const command = process.argv[2] ?? "latest";
const config = knexConfig();
const conn = config.connection as { filename?: string };
if (config.client === "better-sqlite3" && conn.filename) fs.mkdirSync(path.dirname(conn.filename), { recursive: true });
const k = knex(config);
try {
  if (command === "latest" || command === "reset") {
    if (command === "reset") await k.migrate.rollback(undefined, true);
    const [batch, done] = await k.migrate.latest();
    console.log(`migrations: batch ${batch}, ${done.length} applied`);
  }
  if (command === "rollback") {
    const [, undone] = await k.migrate.rollback(undefined, true);
    console.log(`migrations: ${undone.length} rolled back`);
  }
  if (command === "seed" || command === "reset") {
    const [files] = await k.seed.run();
    console.log(`seeds: ${files.map((f: string) => path.basename(f)).join(", ")}`);
  }
} finally {
  await k.destroy();
}

import path from "node:path";
import type { Knex } from "knex";

// One configuration for the app, the scripts and the tests.
// SQLite file under ./data/ by default; DATABASE_URL=postgres://… switches to PostgreSQL.
const root = path.dirname(new URL(import.meta.url).pathname);

export function knexConfig(env: NodeJS.ProcessEnv = process.env): Knex.Config {
  const migrations = { directory: path.join(root, "migrations"), extension: "ts", loadExtensions: [".ts", ".js"] };
  const seeds = { directory: path.join(root, "seeds"), loadExtensions: [".ts", ".js"] };
  const url = env.DATABASE_URL;
  if (url && /^postgres(ql)?:\/\//.test(url)) {
    return { client: "pg", connection: url, pool: { min: 0, max: 10 }, migrations, seeds };
  }
  const filename = url?.startsWith("file:") ? url.slice(5) : url || path.join(root, "data", "limberly.sqlite");
  return {
    client: "better-sqlite3",
    connection: { filename },
    useNullAsDefault: true,
    pool: {
      min: 1,
      max: 1,
      // WAL for concurrent readers, foreign keys enforced, wait instead of failing on a busy file.
      afterCreate: (conn: { pragma: (s: string) => unknown }, done: (err: Error | null, conn: unknown) => void) => {
        conn.pragma("journal_mode = WAL");
        conn.pragma("foreign_keys = ON");
        conn.pragma("busy_timeout = 5000");
        done(null, conn);
      },
    },
    migrations,
    seeds,
  };
}

export default knexConfig();

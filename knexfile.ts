import path from "node:path";
import type { Knex } from "knex";
import pg from "pg";

// One configuration for the app, the scripts and the tests.
// SQLite file under ./data/ by default; DATABASE_URL=postgres://… switches to PostgreSQL.
const root = path.dirname(new URL(import.meta.url).pathname);

// One value model on both engines: rows read from PostgreSQL look like rows read from SQLite.
// DATE → "2026-11-30"; TIMESTAMPTZ (instants) → ISO UTC "2026-11-30T09:00:00.000Z", whatever the server's
// TimeZone; TIMESTAMP without zone (wall-clock times) → "2026-11-30T09:00:00"; INT8 (count(*)) and NUMERIC
// (sum/avg) → numbers while exactly representable, else the text. Set per connection, not globally on `pg`.
const OID = { INT8: 20, NUMERIC: 1700, DATE: 1082, TIMESTAMP: 1114, TIMESTAMPTZ: 1184 } as const;
const parseTimestampTz = pg.types.getTypeParser(OID.TIMESTAMPTZ);
const parsers: Record<number, (text: string) => unknown> = {
  [OID.DATE]: (s) => s,
  [OID.TIMESTAMP]: (s) => s.replace(" ", "T"),
  [OID.TIMESTAMPTZ]: (s) => {
    const d = parseTimestampTz(s) as Date | string;
    return d instanceof Date && !Number.isNaN(d.getTime()) ? d.toISOString() : String(d);
  },
  [OID.INT8]: (s) => {
    const n = Number(s);
    return Number.isSafeInteger(n) ? n : s;
  },
  [OID.NUMERIC]: (s) => {
    const n = Number(s);
    return Number.isFinite(n) && (Math.abs(n) <= Number.MAX_SAFE_INTEGER || !Number.isInteger(n)) ? n : s;
  },
};
export const pgTypes = {
  getTypeParser: (oid: number, format?: "text" | "binary") =>
    (format ?? "text") === "text" && parsers[oid] ? parsers[oid] : pg.types.getTypeParser(oid, format),
};

export function knexConfig(env: NodeJS.ProcessEnv = process.env): Knex.Config {
  const migrations = { directory: path.join(root, "migrations"), extension: "ts", loadExtensions: [".ts", ".js"] };
  const seeds = { directory: path.join(root, "seeds"), loadExtensions: [".ts", ".js"] };
  const url = env.DATABASE_URL;
  if (url && /^postgres(ql)?:\/\//.test(url)) {
    return {
      client: "pg",
      connection: { connectionString: url, types: pgTypes } as Knex.PgConnectionConfig,
      pool: { min: 0, max: 10 },
      migrations,
      seeds,
    };
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

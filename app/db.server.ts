import fs from "node:fs";
import path from "node:path";
import knex, { type Knex } from "knex";
import { knexConfig } from "../knexfile";

// One shared connection per process (kept on globalThis so dev reloads do not open a second pool).
const g = globalThis as unknown as { __limberlyDb?: Knex };

export function db(): Knex {
  if (!g.__limberlyDb) {
    const config = knexConfig();
    const conn = config.connection as { filename?: string } | undefined;
    if (config.client === "better-sqlite3" && conn?.filename && conn.filename !== ":memory:") {
      fs.mkdirSync(path.dirname(conn.filename), { recursive: true });
    }
    g.__limberlyDb = knex(config);
  }
  return g.__limberlyDb;
}

export type Db = Knex | Knex.Transaction;

// The tables are declared for Knex's type inference in ./db-tables.ts.
export type { DbBoolean, TableInsert, TableRow } from "./db-tables";

/**
 * A row of a query Knex cannot infer (an aliased table, a join, a computed column): the models map it to a
 * typed shape straight away. The one place where `any` is allowed.
 */
// biome-ignore lint/suspicious/noExplicitAny: rows of queries outside Knex's inference (aliases, joins, raw columns).
export type Row = Record<string, any>;

import type { Db } from "~/db.server";

// Row locks for check-then-write transactions. On PostgreSQL several requests run at once, so a rule like
// "at most 5 open review requests per worker" or "one open flag of a kind" holds only if the transaction
// holds the worker's row while it counts and writes; the second request then waits and sees the first one's
// rows. SQLite lets one writer in at a time, and Knex leaves FOR UPDATE out there.

/** Locks one worker's row until the surrounding transaction ends (a no-op outside a transaction). */
export async function lockWorker(k: Db, workerId: number): Promise<void> {
  if (k.client.config.client !== "pg") return;
  await k("workers").where({ id: workerId }).forUpdate().first("id");
}

/** True for a unique-key violation on either engine (PostgreSQL 23505, SQLite SQLITE_CONSTRAINT_UNIQUE). */
export function isUniqueViolation(e: unknown): boolean {
  const code = (e as { code?: unknown } | null)?.code;
  return code === "23505" || code === "SQLITE_CONSTRAINT_UNIQUE";
}

import type { Knex } from "knex";

// Empties every application table (not the migration bookkeeping, nor the readiness generation: it must
// only grow, so caches keyed on it never see an old value again), children before parents, so the
// demo seed can be re-run whatever tables later migrations add.
export async function emptyAllTables(trx: Knex.Transaction): Promise<void> {
  const client = String(trx.client.config.client);
  if (client === "pg") {
    const rows = await trx.raw(
      "select tablename from pg_tables where schemaname = current_schema() and tablename not like 'knex_%' and tablename <> 'readiness_generation'",
    );
    const names = rows.rows.map((r: { tablename: string }) => `"${r.tablename}"`);
    if (names.length) await trx.raw(`truncate ${names.join(", ")} restart identity cascade`);
    return;
  }
  const tables: string[] = (
    await trx.raw(
      "select name from sqlite_master where type = 'table' and name not like 'knex_%' and name not like 'sqlite_%' and name <> 'readiness_generation'",
    )
  ).map((r: { name: string }) => r.name);
  const parents = new Map<string, Set<string>>();
  for (const t of tables) {
    const fks = await trx.raw(`pragma foreign_key_list("${t}")`);
    parents.set(t, new Set(fks.map((f: { table: string }) => f.table).filter((p: string) => p !== t)));
  }
  // Delete a table once no remaining table references it.
  const remaining = new Set(tables);
  while (remaining.size) {
    const ready = [...remaining].filter((t) => ![...remaining].some((o) => o !== t && parents.get(o)?.has(t)));
    if (ready.length === 0) throw new Error(`Cannot order tables for deletion: ${[...remaining].join(", ")}`);
    for (const t of ready) {
      await trx(t).del();
      remaining.delete(t);
    }
  }
  await trx.raw("delete from sqlite_sequence").catch(() => undefined);
}

import type { Knex } from "knex";

// Runs can be archived (hidden from the runs list unless asked for) and taken back out. Schema builder only
// (SQLite and PostgreSQL).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.timestamp("archived_at", { useTz: true });
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.dropColumn("archived_at");
  });
}

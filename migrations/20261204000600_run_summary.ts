import type { Knex } from "knex";

// The few numbers the runs list shows (ready after placement / pool, value), written with the result when a
// run finishes, so the list does not unpack every run's plan. Schema builder only (SQLite and PostgreSQL).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.text("summary");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.dropColumn("summary");
  });
}

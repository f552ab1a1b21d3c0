import type { Knex } from "knex";

// Job claims for allocation runs: which app instance solves a run, when it last said it was alive, and how
// many times the run was claimed. A run is claimed with one conditional update (status queued → running);
// another instance takes it over only when its heartbeat is older than the stale limit.
// Schema builder only, so the same migration runs on SQLite and PostgreSQL.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.string("claimed_by", 120);
    t.timestamp("heartbeat_at", { useTz: true });
    t.integer("attempts").notNullable().defaultTo(0);
  });
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.index(["status", "heartbeat_at"], "allocation_runs_status_heartbeat_idx");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.dropIndex(["status", "heartbeat_at"], "allocation_runs_status_heartbeat_idx");
  });
  await knex.schema.alterTable("allocation_runs", (t) => {
    t.dropColumn("attempts");
    t.dropColumn("heartbeat_at");
    t.dropColumn("claimed_by");
  });
}

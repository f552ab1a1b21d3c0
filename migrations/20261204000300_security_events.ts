import type { Knex } from "knex";

// Throttling. security_events: repeated failures that hit a limit (an address or API key prefix refused too
// often, a user uploading too fast), shown to admins. rate_limits: the shared counters of rate-limiter-flexible
// when the app runs on PostgreSQL (several instances count together); the layout is the one that package
// expects (key, points, expire in epoch milliseconds). Unused on SQLite, where the counters live in memory.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("security_events", (t) => {
    t.increments("id");
    t.timestamp("at", { useTz: true }).notNullable();
    t.string("kind", 40).notNullable();
    t.string("subject", 255).notNullable();
    t.string("detail", 500).notNullable();
    t.index(["at"]);
  });
  await knex.schema.createTable("rate_limits", (t) => {
    t.string("key", 255).primary();
    t.integer("points").notNullable().defaultTo(0);
    t.bigInteger("expire");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("rate_limits");
  await knex.schema.dropTable("security_events");
}

import type { Knex } from "knex";

// Portals: a worker asks for a person to review their forecast or their plan (a person
// can always contest an automated figure, docs/consent-and-disclosure.md). Assessors of the worker's site answer in the app; the worker is
// e-mailed. Schema builder only, so the same migration runs on SQLite and PostgreSQL.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("review_requests", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.enu("subject", ["forecast", "plan"], { useNative: false, enumName: "review_subject" }).notNullable();
    t.integer("device_type_id").references("device_types.id").onDelete("SET NULL"); // which forecast, if one was named
    t.text("message").notNullable();
    t.enu("status", ["open", "answered"], { useNative: false, enumName: "review_status" })
      .notNullable()
      .defaultTo("open");
    t.text("answer");
    t.integer("answered_by").references("users.id").onDelete("SET NULL");
    t.integer("requested_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("answered_at", { useTz: true });
    t.index(["status", "created_at"]);
    t.index(["worker_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("review_requests");
}

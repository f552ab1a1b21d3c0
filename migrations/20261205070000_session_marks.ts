import type { Knex } from "knex";

// A trainer's mark on a session (logged or no-show): when it was made (the undo is allowed on that site-local
// day only), the no-show's reason, and what the log changed so that an undo can put it back exactly. Every
// undo is kept in session_mark_undos with what it removed.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("training_sessions", (t) => {
    t.timestamp("marked_at", { useTz: true }).nullable();
    t.string("no_show_reason", 16).nullable();
    t.string("no_show_note", 500).nullable();
    /** JSON: the course and the worker's stage as they were before the log. */
    t.text("undo_state").nullable();
  });
  await knex.schema.createTable("session_mark_undos", (t) => {
    t.increments("id");
    t.integer("session_id").notNullable().references("id").inTable("training_sessions").onDelete("CASCADE");
    t.integer("worker_id").notNullable().references("id").inTable("workers").onDelete("CASCADE");
    t.integer("trainer_id").nullable().references("id").inTable("trainers").onDelete("SET NULL");
    t.string("mark", 16).notNullable();
    t.timestamp("marked_at", { useTz: true }).notNullable();
    /** JSON: the values the undo removed (times, score, notes, no-show reason, adverse events). */
    t.text("removed").notNullable();
    t.integer("undone_by").nullable().references("id").inTable("users").onDelete("SET NULL");
    t.timestamp("undone_at", { useTz: true }).notNullable();
    t.index(["session_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("session_mark_undos");
  await knex.schema.alterTable("training_sessions", (t) => {
    t.dropColumn("undo_state");
    t.dropColumn("no_show_note");
    t.dropColumn("no_show_reason");
    t.dropColumn("marked_at");
  });
}

import type { Knex } from "knex";

// Rules for realistic sessions (docs/methods.md, "Session rules"): per device type the shortest and longest
// session; per trainer the longest continuous teaching and the break after it; per site the working hours of
// each weekday and a calendar of closures (public holidays, shutdowns), typed in or imported from an .ics file.
// Schema builder and query builder only (SQLite and PostgreSQL).
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("device_types", (t) => {
    t.integer("min_session_minutes").notNullable().defaultTo(30);
    t.integer("max_session_minutes").notNullable().defaultTo(120);
  });
  // shortest ≤ longest ≤ the wear-time limit
  await knex("device_types")
    .where("wear_time_limit_minutes", "<", 120)
    .update({ max_session_minutes: knex.ref("wear_time_limit_minutes") });
  await knex("device_types")
    .where("wear_time_limit_minutes", "<", 30)
    .update({ min_session_minutes: knex.ref("wear_time_limit_minutes") });
  await knex.schema.alterTable("trainers", (t) => {
    t.integer("max_continuous_minutes").notNullable().defaultTo(120);
    t.integer("break_minutes").notNullable().defaultTo(15);
  });
  // A site without rows has no working hours of its own: Monday to Friday, the trainers' windows alone.
  await knex.schema.createTable("site_working_hours", (t) => {
    t.increments("id");
    t.integer("site_id").notNullable().references("sites.id").onDelete("CASCADE");
    t.integer("weekday").notNullable(); // 1 = Monday … 7 = Sunday (ISO)
    t.string("start_time", 5).notNullable(); // "07:00", the site's wall clock
    t.string("end_time", 5).notNullable();
    t.unique(["site_id", "weekday"]);
  });
  await knex.schema.createTable("site_closures", (t) => {
    t.increments("id");
    t.integer("site_id").notNullable().references("sites.id").onDelete("CASCADE");
    t.date("starts_on").notNullable();
    t.date("ends_on").notNullable(); // inclusive
    t.string("reason", 300).notNullable();
    t.string("source", 20).notNullable(); // "form" or "ics"
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["site_id", "starts_on"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("site_closures");
  await knex.schema.dropTableIfExists("site_working_hours");
  await knex.schema.alterTable("trainers", (t) => {
    t.dropColumn("max_continuous_minutes");
    t.dropColumn("break_minutes");
  });
  await knex.schema.alterTable("device_types", (t) => {
    t.dropColumn("min_session_minutes");
    t.dropColumn("max_session_minutes");
  });
}

import type { Knex } from "knex";

// Safety: an assessor's decision on a paused course (who, when, the clinical note, any condition), a per-worker
// wear-time limit on a course set by such a decision, and safety findings raised by a session log (a wear-time
// breach) kept apart from the adverse events so the log is never refused for them.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("device_courses", (t) => {
    t.integer("wear_time_limit_minutes"); // null: the device type's limit applies
  });
  await knex.schema.createTable("course_reviews", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id");
    // acknowledge: an open safety finding on a course that is not paused was reviewed; the course is unchanged.
    t.enu("decision", ["resume", "resume_with_conditions", "stop", "acknowledge"], {
      useNative: false,
      enumName: "course_review_decision",
    }).notNullable();
    t.integer("wear_time_limit_minutes");
    t.text("conditions");
    t.text("clinical_note").notNullable();
    t.integer("decided_by").references("users.id").onDelete("SET NULL");
    t.timestamp("decided_at", { useTz: true }).notNullable();
    t.index(["worker_id", "device_type_id"]);
  });
  await knex.schema.createTable("safety_findings", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id");
    t.integer("session_id").references("training_sessions.id").onDelete("CASCADE");
    t.enu("kind", ["wear_time_breach"], { useNative: false, enumName: "safety_finding_kind" }).notNullable();
    t.text("detail").notNullable();
    t.integer("recorded_by").references("users.id").onDelete("SET NULL");
    t.timestamp("raised_at", { useTz: true }).notNullable();
    t.integer("review_id").references("course_reviews.id").onDelete("SET NULL"); // the decision that closed it
    t.index(["worker_id", "device_type_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("safety_findings");
  await knex.schema.dropTableIfExists("course_reviews");
  await knex.schema.alterTable("device_courses", (t) => {
    t.dropColumn("wear_time_limit_minutes");
  });
}

import type { Knex } from "knex";

// Shared backbone for baseline assessment (docs/methods.md), proficiency and logged training,
// used by the assessment, forecast, allocation and portal areas. Schema builder only (SQLite and PostgreSQL).
export async function up(knex: Knex): Promise<void> {
  // A measure of the baseline battery, configured by an assessor.
  await knex.schema.createTable("measures", (t) => {
    t.increments("id");
    t.string("code", 60).notNullable().unique(); // e.g. "sway.ellipseArea95" or "pegboard.right"
    t.string("name", 200).notNullable();
    t.string("unit", 40).notNullable();
    t.boolean("higher_is_better").notNullable();
    t.enu("entry", ["manual", "trace"], { useNative: false, enumName: "measure_entry" }).notNullable();
    t.string("trace_kind", 20); // sway | tracking | glove | timing | force
    t.text("description");
    t.boolean("active").notNullable().defaultTo(true);
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  // Norms: from the site's consented cohort or entered from a published table (with its source).
  await knex.schema.createTable("norm_sets", (t) => {
    t.increments("id");
    t.string("name", 200).notNullable();
    t.enu("origin", ["cohort", "published"], { useNative: false, enumName: "norm_origin" }).notNullable();
    t.text("source").notNullable(); // citation, or cohort description
    t.date("source_date").notNullable();
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("norm_values", (t) => {
    t.integer("norm_set_id").notNullable().references("norm_sets.id").onDelete("CASCADE");
    t.integer("measure_id").notNullable().references("measures.id").onDelete("CASCADE");
    t.float("mean").notNullable();
    t.float("sd").notNullable();
    t.integer("n");
    t.primary(["norm_set_id", "measure_id"]);
  });
  // Identifiable assessment data: erased (rows deleted) when assessment consent is withdrawn.
  await knex.schema.createTable("assessment_sessions", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.date("assessed_on").notNullable();
    t.integer("assessor_user_id").references("users.id").onDelete("SET NULL");
    t.text("notes");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["worker_id", "assessed_on"]);
  });
  await knex.schema.createTable("trace_uploads", (t) => {
    t.increments("id");
    t.integer("session_id").notNullable().references("assessment_sessions.id").onDelete("CASCADE");
    t.string("kind", 20).notNullable();
    t.string("filename", 255).notNullable();
    t.string("sha256", 64).notNullable();
    t.integer("size_bytes").notNullable();
    t.integer("row_count").notNullable();
    t.float("sample_rate_hz");
    t.text("computed").notNullable(); // JSON: computeTrace output
    t.integer("uploaded_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("assessment_results", (t) => {
    t.increments("id");
    t.integer("session_id").notNullable().references("assessment_sessions.id").onDelete("CASCADE");
    t.integer("measure_id").notNullable().references("measures.id");
    t.float("value").notNullable();
    t.float("z_score"); // turned so positive = better
    t.integer("norm_set_id").references("norm_sets.id").onDelete("SET NULL");
    t.integer("trace_upload_id").references("trace_uploads.id").onDelete("CASCADE");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.unique(["session_id", "measure_id"]);
  });
  // Proficiency criterion per device type, set by an assessor.
  await knex.schema.createTable("proficiency_criteria", (t) => {
    t.integer("device_type_id").primary().references("device_types.id").onDelete("CASCADE");
    t.float("score_threshold").notNullable(); // task score 0–1
    t.integer("consecutive_sessions").notNullable().defaultTo(2);
    t.integer("set_by").references("users.id").onDelete("SET NULL");
    t.timestamp("set_at", { useTz: true }).notNullable();
  });
  // A worker's course on one device type: where it stands and, once proficient, the outcome the model learns from.
  await knex.schema.createTable("device_courses", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id");
    t.enu("status", ["planned", "training", "proficient", "paused", "stopped"], {
      useNative: false,
      enumName: "course_status",
    }).notNullable();
    t.float("cumulative_hours").notNullable().defaultTo(0);
    t.date("started_on");
    t.date("proficient_on");
    t.float("hours_to_proficiency");
    t.text("pause_reason");
    t.timestamp("updated_at", { useTz: true }).notNullable();
    t.unique(["worker_id", "device_type_id"]);
  });
  // Scheduled and logged training sessions (created by publishing a plan, or logged directly by a trainer).
  await knex.schema.createTable("training_sessions", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id");
    t.integer("trainer_id").references("trainers.id").onDelete("SET NULL");
    t.integer("device_unit_id").references("device_units.id").onDelete("SET NULL");
    t.integer("allocation_run_id"); // the published run it came from, if any
    t.timestamp("scheduled_start", { useTz: true });
    t.timestamp("scheduled_end", { useTz: true });
    t.enu("status", ["scheduled", "attended", "no_show", "cancelled"], { useNative: false, enumName: "session_status" })
      .notNullable()
      .defaultTo("scheduled");
    t.float("duration_hours"); // logged practice time
    t.float("task_score"); // 0–1 on the device's standard task
    t.float("cumulative_hours"); // practice hours on this device after this session
    t.text("notes");
    t.integer("logged_by").references("users.id").onDelete("SET NULL");
    t.timestamp("logged_at", { useTz: true });
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["worker_id", "device_type_id"]);
    t.index(["trainer_id", "scheduled_start"]);
  });
  await knex.schema.createTable("adverse_events", (t) => {
    t.increments("id");
    t.integer("session_id").notNullable().references("training_sessions.id").onDelete("CASCADE");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.enu("kind", ["pain", "numbness", "skin", "fatigue", "other"], {
      useNative: false,
      enumName: "adverse_kind",
    }).notNullable();
    t.enu("severity", ["mild", "moderate", "severe"], { useNative: false, enumName: "adverse_severity" }).notNullable();
    t.text("notes");
    t.integer("recorded_by").references("users.id").onDelete("SET NULL");
    t.timestamp("at", { useTz: true }).notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of [
    "adverse_events",
    "training_sessions",
    "device_courses",
    "proficiency_criteria",
    "assessment_results",
    "trace_uploads",
    "assessment_sessions",
    "norm_values",
    "norm_sets",
    "measures",
  ]) {
    await knex.schema.dropTableIfExists(table);
  }
}

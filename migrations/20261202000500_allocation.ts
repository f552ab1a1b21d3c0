import type { Knex } from "knex";

// Allocator (docs/methods.md): fleet availability (unit maintenance windows), trainers' weekly working
// pattern and leave, workers' training fields and leave, allocation runs with their progress and result, and
// the published-plan version counter used for the optimistic publish check. Schema builder only, so the same
// migration runs on SQLite and PostgreSQL. JSON is stored as text.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("device_types", (t) => {
    t.text("fit_rules"); // plain-language fit rules, checked by a clinician
  });

  await knex.schema.createTable("unit_maintenance_windows", (t) => {
    t.increments("id");
    t.integer("device_unit_id").notNullable().references("device_units.id").onDelete("CASCADE");
    t.date("starts_on").notNullable(); // inclusive
    t.date("ends_on").notNullable(); // inclusive
    t.string("reason", 300);
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["device_unit_id", "starts_on"]);
  });

  await knex.schema.createTable("trainer_working_pattern", (t) => {
    t.increments("id");
    t.integer("trainer_id").notNullable().references("trainers.id").onDelete("CASCADE");
    t.integer("weekday").notNullable(); // 1 = Monday … 7 = Sunday (ISO)
    t.string("start_time", 5).notNullable(); // "08:00" local time
    t.string("end_time", 5).notNullable(); // "12:30"
    t.index(["trainer_id", "weekday"]);
  });

  await knex.schema.createTable("trainer_leave", (t) => {
    t.increments("id");
    t.integer("trainer_id").notNullable().references("trainers.id").onDelete("CASCADE");
    t.date("starts_on").notNullable();
    t.date("ends_on").notNullable();
    t.string("reason", 300);
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["trainer_id", "starts_on"]);
  });

  // Training fields of a worker: a missing row means the defaults (device type's max hours, priority 1).
  await knex.schema.createTable("worker_training_fields", (t) => {
    t.integer("worker_id").primary().references("workers.id").onDelete("CASCADE");
    t.float("max_hours_per_week"); // null = the device type's default
    t.float("priority").notNullable().defaultTo(1);
    t.text("priority_reason");
    t.integer("updated_by").references("users.id").onDelete("SET NULL");
    t.timestamp("updated_at", { useTz: true }).notNullable();
  });

  await knex.schema.createTable("worker_leave", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.date("starts_on").notNullable();
    t.date("ends_on").notNullable();
    t.string("reason", 300);
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["worker_id", "starts_on"]);
  });

  await knex.schema.createTable("allocation_runs", (t) => {
    t.increments("id");
    t.string("label", 200);
    t.integer("base_run_id").references("allocation_runs.id").onDelete("SET NULL"); // what-if of this run
    t.text("parameters").notNullable(); // JSON: start date, horizon, pool, quantile, fairness, what-if changes
    t.enu("status", ["queued", "running", "done", "failed"], { useNative: false, enumName: "allocation_run_status" })
      .notNullable()
      .defaultTo("queued");
    t.string("phase", 60);
    t.float("fraction").notNullable().defaultTo(0);
    t.text("problem"); // JSON: the solver input and the labels of its ids
    t.text("result"); // JSON: the solver's plan
    t.text("error");
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("started_at", { useTz: true });
    t.timestamp("finished_at", { useTz: true });
    t.integer("version").notNullable().defaultTo(1); // bumped on every change of the row
    t.timestamp("published_at", { useTz: true });
    t.integer("published_by").references("users.id").onDelete("SET NULL");
    t.integer("published_plan_version");
    t.index(["status"]);
    t.index(["created_at"]);
  });

  // One row: the version of the published plan. Publishing succeeds only if the version it was based on
  // is still current (update … where version = expected), so of two coordinators publishing at once one wins.
  await knex.schema.createTable("published_plan_state", (t) => {
    t.integer("id").primary();
    t.integer("version").notNullable().defaultTo(0);
    t.integer("current_run_id").references("allocation_runs.id").onDelete("SET NULL");
    t.integer("published_by").references("users.id").onDelete("SET NULL");
    t.timestamp("published_at", { useTz: true });
  });
  await knex("published_plan_state").insert({ id: 1, version: 0 });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of [
    "published_plan_state",
    "allocation_runs",
    "worker_leave",
    "worker_training_fields",
    "trainer_leave",
    "trainer_working_pattern",
    "unit_maintenance_windows",
  ]) {
    await knex.schema.dropTableIfExists(table);
  }
  await knex.schema.alterTable("device_types", (t) => {
    t.dropColumn("fit_rules");
  });
}

import type { Knex } from "knex";

// Core tables: organisation and its places, people and their roles, workers, consent, access log,
// devices and trainers, API keys, server-side sessions. Written with the schema builder only so the same
// migration runs on SQLite and PostgreSQL.
const ROLES = ["assessor", "coordinator", "trainer", "manager", "worker", "admin"];
const STAGES = [
  "invited",
  "consented",
  "baselined",
  "forecast",
  "planned",
  "training",
  "proficient",
  "paused",
  "withdrawn",
];
const PURPOSES = ["assessment", "planning", "model"];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("organisations", (t) => {
    t.increments("id");
    t.string("name", 200).notNullable();
    t.integer("disclosure_threshold").notNullable().defaultTo(5);
    t.integer("retention_days").notNullable().defaultTo(3650);
    t.text("manager_groupings").notNullable().defaultTo('["site","department","deviceType","stage","week"]');
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("sites", (t) => {
    t.increments("id");
    t.integer("organisation_id").notNullable().references("organisations.id").onDelete("CASCADE");
    t.string("code", 20).notNullable().unique();
    t.string("name", 200).notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("departments", (t) => {
    t.increments("id");
    t.integer("site_id").notNullable().references("sites.id").onDelete("CASCADE");
    t.string("code", 20).notNullable();
    t.string("name", 200).notNullable();
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.unique(["site_id", "code"]);
  });
  await knex.schema.createTable("users", (t) => {
    t.increments("id");
    t.string("email", 320).notNullable().unique();
    t.string("display_name", 200).notNullable();
    t.boolean("active").notNullable().defaultTo(true);
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("last_sign_in_at", { useTz: true });
  });
  // A user may hold several roles; each assignment is scoped to a site, a department, or (both null) the organisation.
  await knex.schema.createTable("role_assignments", (t) => {
    t.increments("id");
    t.integer("user_id").notNullable().references("users.id").onDelete("CASCADE");
    t.enu("role", ROLES, { useNative: false, enumName: "role_name" }).notNullable();
    t.integer("site_id").references("sites.id").onDelete("CASCADE");
    t.integer("department_id").references("departments.id").onDelete("CASCADE");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["user_id"]);
  });
  await knex.schema.createTable("workers", (t) => {
    t.increments("id");
    t.string("employee_number", 40).notNullable().unique();
    t.string("given_name", 120).notNullable();
    t.string("family_name", 120).notNullable();
    t.string("email", 320);
    t.integer("site_id").notNullable().references("sites.id");
    t.integer("department_id").notNullable().references("departments.id");
    t.integer("user_id").references("users.id").onDelete("SET NULL");
    t.enu("stage", STAGES, { useNative: false, enumName: "readiness_stage" }).notNullable().defaultTo("invited");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("updated_at", { useTz: true }).notNullable();
    t.index(["site_id", "department_id"]);
    t.index(["stage"]);
  });
  await knex.schema.createTable("stage_changes", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id");
    t.string("from_stage", 20);
    t.string("to_stage", 20).notNullable();
    t.integer("actor_user_id").references("users.id").onDelete("SET NULL");
    t.timestamp("at", { useTz: true }).notNullable();
    t.index(["worker_id"]);
  });
  await knex.schema.createTable("consent_text_versions", (t) => {
    t.increments("id");
    t.enu("purpose", PURPOSES, { useNative: false, enumName: "consent_purpose" }).notNullable();
    t.string("version", 20).notNullable();
    t.text("body").notNullable();
    t.date("effective_from").notNullable();
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.unique(["purpose", "version"]);
  });
  await knex.schema.createTable("consent_records", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.enu("purpose", PURPOSES, { useNative: false, enumName: "consent_purpose_r" }).notNullable();
    t.integer("text_version_id").notNullable().references("consent_text_versions.id");
    t.enu("status", ["given", "withdrawn"], { useNative: false, enumName: "consent_status" }).notNullable();
    t.timestamp("given_at", { useTz: true });
    t.timestamp("withdrawn_at", { useTz: true });
    t.integer("witness_user_id").references("users.id").onDelete("SET NULL");
    t.integer("recorded_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["worker_id", "purpose"]);
  });
  // Kept when health data is erased: it records that a read happened, not what was read.
  await knex.schema.createTable("access_log", (t) => {
    t.increments("id");
    t.timestamp("at", { useTz: true }).notNullable();
    t.integer("actor_user_id").references("users.id").onDelete("SET NULL");
    t.string("actor_role", 20);
    t.integer("api_key_id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.string("resource", 60).notNullable();
    t.string("action", 20).notNullable().defaultTo("read");
    t.string("route", 300);
    t.string("ip", 64);
    t.index(["worker_id", "at"]);
    t.index(["at"]);
  });
  await knex.schema.createTable("device_types", (t) => {
    t.increments("id");
    t.string("code", 40).notNullable().unique();
    t.string("name", 200).notNullable();
    t.enu("category", ["supernumerary_finger", "supernumerary_arm", "exoskeleton"], {
      useNative: false,
      enumName: "device_category",
    }).notNullable();
    t.text("description");
    t.integer("wear_time_limit_minutes").notNullable().defaultTo(120);
    t.float("default_max_hours_per_week").notNullable().defaultTo(6);
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("device_units", (t) => {
    t.increments("id");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.integer("site_id").notNullable().references("sites.id");
    t.string("serial", 60).notNullable().unique();
    t.enu("status", ["in_service", "maintenance", "retired"], { useNative: false, enumName: "unit_status" })
      .notNullable()
      .defaultTo("in_service");
    t.float("bookable_hours_per_week").notNullable().defaultTo(30);
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("trainers", (t) => {
    t.increments("id");
    t.integer("user_id").notNullable().unique().references("users.id").onDelete("CASCADE");
    t.integer("site_id").notNullable().references("sites.id");
    t.integer("trainees_per_session").notNullable().defaultTo(2);
    t.float("hours_per_week").notNullable().defaultTo(30);
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
  await knex.schema.createTable("trainer_certifications", (t) => {
    t.integer("trainer_id").notNullable().references("trainers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.date("certified_on");
    t.primary(["trainer_id", "device_type_id"]);
  });
  await knex.schema.createTable("api_keys", (t) => {
    t.increments("id");
    t.string("name", 120).notNullable();
    t.string("prefix", 16).notNullable().unique();
    t.string("secret_hash", 128).notNullable();
    t.enu("role", ROLES, { useNative: false, enumName: "api_key_role" }).notNullable();
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("revoked_at", { useTz: true });
    t.timestamp("last_used_at", { useTz: true });
  });
  await knex.schema.createTable("api_key_sites", (t) => {
    t.integer("api_key_id").notNullable().references("api_keys.id").onDelete("CASCADE");
    t.integer("site_id").notNullable().references("sites.id").onDelete("CASCADE");
    t.primary(["api_key_id", "site_id"]);
  });
  await knex.schema.createTable("sessions", (t) => {
    t.string("id", 64).primary();
    t.text("data").notNullable();
    t.timestamp("expires_at", { useTz: true });
    t.timestamp("created_at", { useTz: true }).notNullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of [
    "sessions",
    "api_key_sites",
    "api_keys",
    "trainer_certifications",
    "trainers",
    "device_units",
    "device_types",
    "access_log",
    "consent_records",
    "consent_text_versions",
    "stage_changes",
    "workers",
    "role_assignments",
    "users",
    "departments",
    "sites",
    "organisations",
  ]) {
    await knex.schema.dropTableIfExists(table);
  }
}

import type { Knex } from "knex";

// Separation of duties: a clinical role or a clinical-scope API key asked for by one admin waits in
// privilege_requests until a second admin approves or refuses it; every request, decision, grant and
// removal is kept in privilege_audit. A key created for a clinical role stays unusable
// (awaiting_approval) until approved.
const ROLES = ["assessor", "coordinator", "trainer", "manager", "worker", "admin"];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("api_keys", (t) => {
    t.boolean("awaiting_approval").notNullable().defaultTo(false);
  });
  await knex.schema.createTable("privilege_requests", (t) => {
    t.increments("id");
    t.enu("kind", ["role", "api_key"], { useNative: false, enumName: "privilege_request_kind" }).notNullable();
    t.enu("role", ROLES, { useNative: false, enumName: "privilege_request_role" }).notNullable();
    t.integer("target_user_id").references("users.id").onDelete("CASCADE");
    t.integer("site_id").references("sites.id").onDelete("CASCADE");
    t.integer("department_id").references("departments.id").onDelete("CASCADE");
    t.integer("api_key_id").references("api_keys.id").onDelete("CASCADE");
    // What is asked for, in words ("Assessor for Tamsin Velde at Riverside"), as the approver reads it.
    t.string("subject", 400).notNullable();
    t.integer("requested_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.enu("status", ["pending", "approved", "refused"], { useNative: false, enumName: "privilege_request_status" })
      .notNullable()
      .defaultTo("pending");
    t.integer("decided_by").references("users.id").onDelete("SET NULL");
    t.timestamp("decided_at", { useTz: true });
    t.index(["status"]);
  });
  await knex.schema.createTable("privilege_audit", (t) => {
    t.increments("id");
    t.timestamp("at", { useTz: true }).notNullable();
    t.integer("actor_id").references("users.id").onDelete("SET NULL");
    // Names are copied so the log still reads after a user is removed.
    t.string("actor_name", 200).notNullable();
    t.string("event", 40).notNullable();
    t.integer("request_id").references("privilege_requests.id").onDelete("SET NULL");
    t.integer("target_user_id").references("users.id").onDelete("SET NULL");
    t.integer("api_key_id").references("api_keys.id").onDelete("SET NULL");
    t.string("subject", 400).notNullable();
    t.string("role", 20).notNullable();
    t.index(["at"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists("privilege_audit");
  await knex.schema.dropTableIfExists("privilege_requests");
  await knex.schema.alterTable("api_keys", (t) => {
    t.dropColumn("awaiting_approval");
  });
}

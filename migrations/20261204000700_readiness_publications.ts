import type { Knex } from "knex";

// What the readiness board published, per organisation table, with the aggregate counts under it (no
// individuals), so the next publication is protected against it and unchanged counts reuse it; and which
// publication each viewer (user or API key) received, and when. The organisation sets the share of a
// table that protection may hide before the board switches to a coarser grouping.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("organisations", (t) => {
    t.double("max_hidden_share").notNullable().defaultTo(0.25);
  });
  await knex.schema.createTable("readiness_publications", (t) => {
    t.increments("id");
    t.string("table_key", 32).notNullable();
    t.string("grouping", 32).notNullable();
    /** JSON: rows, parentOf, columns, counts (department × column), threshold. */
    t.text("counts").notNullable();
    /** JSON: the published department and site tables (null where hidden). */
    t.text("published").notNullable();
    t.integer("linked_to").nullable().references("id").inTable("readiness_publications");
    t.text("note").nullable();
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.index(["table_key", "id"]);
  });
  await knex.schema.createTable("readiness_receipts", (t) => {
    t.increments("id");
    t.integer("publication_id").notNullable().references("id").inTable("readiness_publications").onDelete("CASCADE");
    t.string("viewer_kind", 8).notNullable();
    t.integer("viewer_id").notNullable();
    t.timestamp("received_at", { useTz: true }).notNullable();
    t.unique(["publication_id", "viewer_kind", "viewer_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable("readiness_receipts");
  await knex.schema.dropTable("readiness_publications");
  await knex.schema.alterTable("organisations", (t) => {
    t.dropColumn("max_hidden_share");
  });
}

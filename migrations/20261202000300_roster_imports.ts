import type { Knex } from "knex";

// Roster import batches: an uploaded roster waits here between upload, column mapping and
// preview; once imported (or discarded) its rows are cleared and only the summary stays.
// Plus indexes for the worker list (sorted and filtered by name on 10,000 workers).
// Schema builder only, so the same migration runs on SQLite and PostgreSQL.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable("roster_imports", (t) => {
    t.increments("id");
    t.string("filename", 255).notNullable();
    t.string("sha256", 64).notNullable();
    t.integer("size_bytes").notNullable();
    t.integer("row_count").notNullable();
    t.text("headers").notNullable(); // JSON: header cells in file order
    t.text("rows"); // JSON: data rows (strings); cleared after import or discard
    t.text("mapping"); // JSON: field → header index
    t.enu("status", ["uploaded", "imported", "discarded"], {
      useNative: false,
      enumName: "roster_import_status",
    }).notNullable();
    t.text("summary"); // JSON: created / updated / unchanged / skipped counts
    t.integer("created_by").references("users.id").onDelete("SET NULL");
    t.timestamp("created_at", { useTz: true }).notNullable();
    t.timestamp("finished_at", { useTz: true });
    t.index(["created_by", "created_at"]);
  });
  await knex.schema.alterTable("workers", (t) => {
    t.index(["family_name", "given_name"], "workers_name_idx");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("workers", (t) => {
    t.dropIndex(["family_name", "given_name"], "workers_name_idx");
  });
  await knex.schema.dropTableIfExists("roster_imports");
}

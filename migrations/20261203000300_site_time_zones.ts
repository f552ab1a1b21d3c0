import type { Knex } from "knex";

// Each site keeps its wall-clock times in an IANA time zone; the organisation holds the default for new sites.
// Existing rows get "UTC", which is how session times were read until now.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("organisations", (t) => {
    t.string("time_zone", 64).notNullable().defaultTo("UTC");
  });
  await knex.schema.alterTable("sites", (t) => {
    t.string("time_zone", 64).notNullable().defaultTo("UTC");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("sites", (t) => {
    t.dropColumn("time_zone");
  });
  await knex.schema.alterTable("organisations", (t) => {
    t.dropColumn("time_zone");
  });
}

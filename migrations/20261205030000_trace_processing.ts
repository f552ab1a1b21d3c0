import type { Knex } from "knex";

// Each trace upload records the processing its measures were computed after (docs/methods.md, "Sway
// processing"): the rate it was resampled to, the filter and its cut-off, and the trial's duration. The
// recorded rate stays in sample_rate_hz. Uploads stored before keep nulls: they were measured unprocessed.
const COLUMNS = ["duration_seconds", "cutoff_hz", "filter", "resampled_rate_hz"];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("trace_uploads", (t) => {
    t.double("resampled_rate_hz");
    t.string("filter", 200);
    t.double("cutoff_hz");
    t.double("duration_seconds");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("trace_uploads", (t) => {
    for (const c of COLUMNS) t.dropColumn(c);
  });
}

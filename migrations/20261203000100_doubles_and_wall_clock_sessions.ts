import type { Knex } from "knex";

// Measures and every other `t.float` column become 8-byte doubles on PostgreSQL (Knex's float is a 4-byte
// `real` there; SQLite's REAL is already 8-byte). Session times are the site's wall-clock times, so on
// PostgreSQL they become `timestamp` without zone (read back as "2026-12-07T09:00:00" whatever the server's
// TimeZone); old values become the wall-clock time that was written (see below). Values already stored as
// `real` keep their 6 significant digits (digits lost before cannot come back). On SQLite the stored
// text is normalised to the same zone-less shape.
const FLOATS: Record<string, string[]> = {
  allocation_runs: ["fraction"],
  assessment_results: ["value", "z_score"],
  device_courses: ["cumulative_hours", "hours_to_proficiency"],
  device_types: ["default_max_hours_per_week"],
  device_units: ["bookable_hours_per_week"],
  forecast_outcomes: ["forecast_median_hours", "forecast_lower_hours", "forecast_upper_hours", "actual_hours"],
  forecasts: [
    "median_hours",
    "lower_hours",
    "upper_hours",
    "interval_level",
    "planning_quantile",
    "planning_hours",
    "log_mean",
    "log_scale",
    "df",
    "hours_done",
    "remaining_hours",
    "remaining_lower",
    "remaining_upper",
    "remaining_planning_hours",
  ],
  model_versions: ["residual_sd", "df_residual", "ridge", "loocv_mae_hours", "r_squared", "loocv_coverage80"],
  norm_values: ["mean", "sd"],
  organisations: ["planning_quantile"],
  proficiency_criteria: ["score_threshold"],
  trace_uploads: ["sample_rate_hz"],
  trainers: ["hours_per_week"],
  training_sessions: ["duration_hours", "task_score", "cumulative_hours"],
  worker_training_fields: ["max_hours_per_week", "priority"],
};
const WALL_CLOCK = ["scheduled_start", "scheduled_end"];

const isPg = (knex: Knex) => String(knex.client.config.client) === "pg";

export async function up(knex: Knex): Promise<void> {
  if (!isPg(knex)) {
    for (const c of WALL_CLOCK)
      await knex.raw(`update training_sessions set ${c} = substr(${c}, 1, 19) where length(${c}) > 19`);
    return;
  }
  await changeFloatColumns(knex, "double precision");
  // Published sessions were written as zone-less text, which PostgreSQL read in the server's TimeZone; logged
  // and demo sessions were written with "Z". Each is turned back into the wall-clock time that was written.
  const wall = (c: string) =>
    `${c} at time zone (case when allocation_run_id is not null then current_setting('TimeZone') else 'UTC' end)`;
  await knex.raw(
    `alter table training_sessions ${WALL_CLOCK.map((c) => `alter column ${c} type timestamp(0) without time zone using ${wall(c)}`).join(", ")}`,
  );
}

export async function down(knex: Knex): Promise<void> {
  if (!isPg(knex)) return;
  await knex.raw(
    `alter table training_sessions ${WALL_CLOCK.map((c) => `alter column ${c} type timestamptz using ${c} at time zone 'UTC'`).join(", ")}`,
  );
  await changeFloatColumns(knex, "real");
}

// Changes the type and sets each column's default again as a plain literal: PostgreSQL would otherwise keep
// the old default cast through the old type (a default of 0.8 would become 0.800000011920929).
async function changeFloatColumns(knex: Knex, type: "double precision" | "real"): Promise<void> {
  for (const [table, columns] of Object.entries(FLOATS)) {
    const defaults = await knex("information_schema.columns")
      .where({ table_schema: knex.raw("current_schema()"), table_name: table })
      .whereIn("column_name", columns)
      .whereNotNull("column_default")
      .select("column_name", "column_default");
    // real → numeric keeps the 6 significant digits a real holds (0.8, not 0.800000011920929).
    const changes = columns.map(
      (c) => `alter column ${c} type ${type}${type === "real" ? "" : ` using ${c}::numeric::double precision`}`,
    );
    for (const d of defaults) {
      const literal = /(-?\d+(?:\.\d+)?)/.exec(String(d.column_default))?.[1];
      if (!literal) throw new Error(`Unexpected default on ${table}.${d.column_name}: ${d.column_default}`);
      changes.push(`alter column ${d.column_name} set default ${literal}`);
    }
    await knex.raw(`alter table ${table} ${changes.join(", ")}`);
  }
}

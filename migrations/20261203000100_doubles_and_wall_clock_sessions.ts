import type { Knex } from "knex";

// Measures and every other `t.float` column become 8-byte doubles on PostgreSQL (Knex's float is a 4-byte
// `real` there; SQLite's REAL is already 8-byte). Session times are the site's wall-clock times, so on
// PostgreSQL they become `timestamp` without zone (read back as "2026-12-07T09:00:00" whatever the server's
// TimeZone); the old values are taken as UTC wall-clock, as the app read them before. On SQLite the stored
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
  for (const [table, columns] of Object.entries(FLOATS))
    await knex.raw(`alter table ${table} ${columns.map((c) => `alter column ${c} type double precision`).join(", ")}`);
  await knex.raw(
    `alter table training_sessions ${WALL_CLOCK.map((c) => `alter column ${c} type timestamp(0) without time zone using ${c} at time zone 'UTC'`).join(", ")}`,
  );
}

export async function down(knex: Knex): Promise<void> {
  if (!isPg(knex)) return;
  await knex.raw(
    `alter table training_sessions ${WALL_CLOCK.map((c) => `alter column ${c} type timestamptz using ${c} at time zone 'UTC'`).join(", ")}`,
  );
  for (const [table, columns] of Object.entries(FLOATS))
    await knex.raw(`alter table ${table} ${columns.map((c) => `alter column ${c} type real`).join(", ")}`);
}

import type { Knex } from "knex";

// Forecast area (docs/methods.md): versioned hours-to-proficiency models, per-worker forecasts,
// drift records (actual vs forecast once a worker reaches the criterion) and review flags (plateaus).
// Schema builder only, so the same migration runs on SQLite and PostgreSQL. JSON is stored as text.
export async function up(knex: Knex): Promise<void> {
  // The planning figure is this quantile of the forecast distribution (default 80th percentile, docs/methods.md).
  await knex.schema.alterTable("organisations", (t) => {
    t.float("planning_quantile").notNullable().defaultTo(0.8);
  });

  await knex.schema.createTable("model_versions", (t) => {
    t.increments("id");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.integer("version_number").notNullable(); // 1, 2, … per device type
    t.text("measure_ids").notNullable(); // JSON number[] in coefficient order
    t.text("measure_codes").notNullable(); // JSON string[] (same order), kept for history
    t.integer("cohort_size").notNullable();
    t.text("excluded").notNullable(); // JSON { reason: count }: still training, withdrawn, …
    t.text("coefficients").notNullable(); // JSON number[]: intercept first, then per measure (standardised scale)
    t.text("standard_errors").notNullable(); // JSON number[], same order
    t.text("covariance").notNullable(); // JSON number[][]: σ²-scaled, for prediction intervals
    t.float("residual_sd").notNullable(); // log-hours
    t.float("df_residual").notNullable();
    t.float("ridge").notNullable().defaultTo(0);
    t.text("standardisation").notNullable(); // JSON { means: number[], sds: number[] } of the cohort's z-scores
    t.float("loocv_mae_hours").notNullable();
    t.float("r_squared").notNullable();
    t.float("loocv_coverage80").notNullable();
    t.text("calibration").notNullable(); // JSON de-identified [actualHours, looPredictedHours, lower, upper][]
    t.enu("status", ["draft", "approved", "retired"], { useNative: false, enumName: "model_version_status" })
      .notNullable()
      .defaultTo("draft");
    t.text("notes");
    t.integer("fitted_by").references("users.id").onDelete("SET NULL");
    t.timestamp("fitted_at", { useTz: true }).notNullable();
    t.integer("approved_by").references("users.id").onDelete("SET NULL");
    t.timestamp("approved_at", { useTz: true });
    t.integer("retired_by").references("users.id").onDelete("SET NULL");
    t.timestamp("retired_at", { useTz: true });
    t.unique(["device_type_id", "version_number"]);
    t.index(["device_type_id", "status"]);
  });

  // The current forecast of one worker on one device type. Erased when the worker withdraws consent.
  await knex.schema.createTable("forecasts", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.integer("model_version_id").notNullable().references("model_versions.id").onDelete("CASCADE");
    // Baseline forecast of TOTAL hours (from the model alone).
    t.float("median_hours").notNullable();
    t.float("lower_hours").notNullable();
    t.float("upper_hours").notNullable();
    t.float("interval_level").notNullable().defaultTo(0.8);
    t.float("planning_quantile").notNullable();
    t.float("planning_hours").notNullable();
    t.float("log_mean").notNullable();
    t.float("log_scale").notNullable();
    t.float("df").notNullable();
    t.text("explanation").notNullable(); // JSON: per-measure contributions
    // Progress update (null before any session): hours done and the remaining-hours forecast.
    t.float("hours_done").notNullable().defaultTo(0);
    t.string("progress_status", 20); // combined | prior-only | review | proficient
    t.float("remaining_hours");
    t.float("remaining_lower");
    t.float("remaining_upper");
    t.float("remaining_planning_hours");
    t.text("progress"); // JSON: weights, curve evidence, reason
    t.timestamp("computed_at", { useTz: true }).notNullable();
    t.unique(["worker_id", "device_type_id"]);
  });

  // Drift: for each worker who reached proficiency, the baseline forecast of the version in use and the actual.
  await knex.schema.createTable("forecast_outcomes", (t) => {
    t.increments("id");
    t.integer("model_version_id").notNullable().references("model_versions.id").onDelete("CASCADE");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.float("forecast_median_hours").notNullable();
    t.float("forecast_lower_hours").notNullable();
    t.float("forecast_upper_hours").notNullable();
    t.float("actual_hours").notNullable();
    t.boolean("covered").notNullable();
    t.date("reached_on").notNullable();
    t.timestamp("recorded_at", { useTz: true }).notNullable();
    t.unique(["worker_id", "device_type_id"]);
    t.index(["model_version_id"]);
  });

  await knex.schema.createTable("review_flags", (t) => {
    t.increments("id");
    t.integer("worker_id").notNullable().references("workers.id").onDelete("CASCADE");
    t.integer("device_type_id").notNullable().references("device_types.id").onDelete("CASCADE");
    t.enu("kind", ["plateau", "beyond_forecast"], { useNative: false, enumName: "review_flag_kind" }).notNullable();
    t.text("reason").notNullable();
    t.timestamp("raised_at", { useTz: true }).notNullable();
    t.integer("resolved_by").references("users.id").onDelete("SET NULL");
    t.timestamp("resolved_at", { useTz: true });
    t.index(["worker_id", "device_type_id"]);
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const table of ["review_flags", "forecast_outcomes", "forecasts", "model_versions"]) {
    await knex.schema.dropTableIfExists(table);
  }
  await knex.schema.alterTable("organisations", (t) => {
    t.dropColumn("planning_quantile");
  });
}

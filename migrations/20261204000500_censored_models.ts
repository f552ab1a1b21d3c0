import type { Knex } from "knex";

// Forecast models fitted on censored courses (docs/methods.md, docs/decisions/): a version records the norm
// set its z-scores were computed with (used again at prediction time), how it was fitted, its completed and
// censored courses, and the leave-one-out check of its planning figure with censoring. Drift records keep
// the planning figure so that a miss can be judged against it. Older versions keep nulls here: fitted by
// least squares on completed courses, scored with each result's stored z-score.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable("model_versions", (t) => {
    t.integer("norm_set_id").references("norm_sets.id").onDelete("RESTRICT");
    t.string("method", 32).notNullable().defaultTo("least-squares");
    t.integer("completed_courses");
    t.integer("still_training_courses");
    t.integer("stopped_courses");
    t.double("planning_quantile");
    t.double("loocv_planning_coverage");
    t.double("loocv_planning_coverage_se");
    t.double("loocv_coverage_stopped_as_miss");
    t.text("risk_groups"); // JSON [{ label, courses, planningFrom, planningTo, coverage, standardError }]
  });
  await knex.schema.alterTable("forecast_outcomes", (t) => {
    t.double("forecast_planning_hours");
    t.double("planning_quantile");
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable("forecast_outcomes", (t) => {
    t.dropColumn("planning_quantile");
    t.dropColumn("forecast_planning_hours");
  });
  await knex.schema.alterTable("model_versions", (t) => {
    t.dropForeign(["norm_set_id"]);
  });
  await knex.schema.alterTable("model_versions", (t) => {
    for (const c of [
      "risk_groups",
      "loocv_coverage_stopped_as_miss",
      "loocv_planning_coverage_se",
      "loocv_planning_coverage",
      "planning_quantile",
      "stopped_courses",
      "still_training_courses",
      "completed_courses",
      "method",
      "norm_set_id",
    ])
      t.dropColumn(c);
  });
}

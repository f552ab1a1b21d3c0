// Shared by the benchmarks: fills an empty, migrated database (SQLite or PostgreSQL) with one INVENTED
// organisation — 4 sites × 6 departments, 20,000 workers spread over the readiness stages, forecasts from an
// approved model version, courses, scheduled sessions — plus what the allocation problem reads: planning
// consent, device units with maintenance windows, trainers with certifications, working patterns and leave,
// worker leave and training fields. Seeded, so both engines get the same rows in the same order.
import type { Knex } from "knex";
import { mulberry32 as seeded } from "../app/compute/seeded-random";
import { addDays, addWeeks, wallClockAt } from "../app/dates/calendar";
import { STAGES } from "../app/domain/stages";

const SITES = 4;
const DEPTS = 6;
const DEVICE_TYPES = 4;
const UNITS_PER_SITE_AND_TYPE = 3;
const TRAINERS_PER_SITE = 6;
/** First Monday of the plans the allocation benchmarks build. */
export const PLAN_START = "2027-01-04";

export interface BenchOrganisation {
  workers: number;
  siteIds: number[];
  deptIds: number[];
  deviceIds: number[];
}

export async function fillBenchOrganisation(k: Knex, workerCount = 20_000): Promise<BenchOrganisation> {
  const rand = seeded(20261206);
  const now = "2026-12-01T00:00:00.000Z";
  const [org] = await k("organisations")
    .insert({ name: "Bench Works (invented)", disclosure_threshold: 5, created_at: now })
    .returning("id");
  const deptIds: number[] = [];
  const siteIds: number[] = [];
  for (let s = 0; s < SITES; s++) {
    const [site] = await k("sites")
      .insert({ organisation_id: org.id, code: `S${s}`, name: `Site ${s + 1}`, created_at: now })
      .returning("id");
    siteIds.push(site.id);
    for (let d = 0; d < DEPTS; d++) {
      const [dept] = await k("departments")
        .insert({ site_id: site.id, code: `D${d}`, name: `Department ${d + 1}`, created_at: now })
        .returning("id");
      deptIds.push(dept.id);
    }
  }
  const deviceIds: number[] = [];
  for (let v = 0; v < DEVICE_TYPES; v++) {
    const [dv] = await k("device_types")
      .insert({ code: `DEV${v}`, name: `Device ${v + 1}`, category: "exoskeleton", created_at: now })
      .returning("id");
    deviceIds.push(dv.id);
  }
  const [mv] = await k("model_versions")
    .insert({
      device_type_id: deviceIds[0],
      version_number: 1,
      measure_ids: "[]",
      measure_codes: "[]",
      cohort_size: 40,
      excluded: "{}",
      coefficients: "[]",
      standard_errors: "[]",
      covariance: "[]",
      residual_sd: 0.3,
      df_residual: 30,
      standardisation: "{}",
      loocv_mae_hours: 2,
      r_squared: 0.5,
      loocv_coverage80: 0.8,
      calibration: "[]",
      status: "approved",
      fitted_at: now,
    })
    .returning("id");

  const [run] = await k("allocation_runs")
    .insert({ label: "Bench plan (invented)", parameters: "{}", status: "done", created_at: now, published_at: now })
    .returning("id");
  const batch = async (table: string, rows: Record<string, unknown>[]) => {
    for (let i = 0; i < rows.length; i += 400) await k(table).insert(rows.slice(i, i + 400));
  };
  const workers = Array.from({ length: workerCount }, (_, i) => {
    const dept = Math.floor(rand() * deptIds.length);
    return {
      employee_number: `BW-${String(i + 1).padStart(6, "0")}`,
      given_name: "Invented",
      family_name: `Person ${i + 1}`,
      site_id: siteIds[Math.floor(dept / DEPTS)],
      department_id: deptIds[dept],
      stage: STAGES[Math.floor(rand() ** 1.5 * STAGES.length)],
      created_at: now,
      updated_at: now,
    };
  });
  await batch("workers", workers);
  const ids: { id: number; stage: string }[] = await k("workers").select("id", "stage").orderBy("id");
  const courses: Record<string, unknown>[] = [];
  const forecasts: Record<string, unknown>[] = [];
  const sessions: Record<string, unknown>[] = [];
  for (const w of ids) {
    if (w.stage === "invited" || w.stage === "withdrawn") continue;
    const dev = deviceIds[Math.floor(rand() * deviceIds.length)];
    const hours = 6 + rand() * 30;
    forecasts.push({
      worker_id: w.id,
      device_type_id: dev,
      model_version_id: mv.id,
      median_hours: hours,
      lower_hours: hours * 0.7,
      upper_hours: hours * 1.4,
      planning_quantile: 0.8,
      planning_hours: hours * 1.2,
      log_mean: Math.log(hours),
      log_scale: 0.3,
      df: 30,
      explanation: "{}",
      computed_at: now,
    });
    if (w.stage === "proficient")
      courses.push({ worker_id: w.id, device_type_id: dev, status: "proficient", updated_at: now });
    if (w.stage === "planned" || w.stage === "training") {
      const last = Math.floor(rand() * 12);
      for (let s = 0; s <= last; s += 3) {
        sessions.push({
          worker_id: w.id,
          device_type_id: dev,
          allocation_run_id: run.id,
          status: "scheduled",
          created_at: now,
          // a wall-clock time of the site, without a zone
          scheduled_start: wallClockAt(addWeeks("2026-12-07", s), "09:00"),
        });
      }
    }
  }
  await batch("device_courses", courses);
  await batch("forecasts", forecasts);
  await batch("training_sessions", sessions);

  // What the allocation problem reads (its own seed, so the rows above stay as they were without it).
  const r2 = seeded(20261207);
  const [text] = await k("consent_text_versions")
    .insert({
      purpose: "planning",
      version: "1",
      body: "Invented planning consent text.",
      effective_from: "2026-01-01",
      created_at: now,
    })
    .returning("id");
  await batch(
    "consent_records",
    ids
      .filter((w) => w.stage !== "invited" && w.stage !== "withdrawn")
      .map((w) => ({
        worker_id: w.id,
        purpose: "planning",
        text_version_id: text.id,
        status: "given",
        given_at: now,
        created_at: now,
      })),
  );
  const units: Record<string, unknown>[] = [];
  for (const siteId of siteIds)
    for (const dev of deviceIds)
      for (let u = 0; u < UNITS_PER_SITE_AND_TYPE; u++)
        units.push({
          device_type_id: dev,
          site_id: siteId,
          serial: `BU-${siteId}-${dev}-${u + 1}`,
          status: u === 0 && r2() < 0.2 ? "maintenance" : "in_service",
          bookable_hours_per_week: 30,
          created_at: now,
        });
  await batch("device_units", units);
  const unitIds: number[] = await k("device_units").orderBy("id").pluck("id");
  await batch(
    "unit_maintenance_windows",
    unitIds
      .filter(() => r2() < 0.25)
      .map((id) => ({ device_unit_id: id, starts_on: "2027-01-18", ends_on: "2027-01-20", created_at: now })),
  );
  for (const [si, siteId] of siteIds.entries()) {
    for (let t = 0; t < TRAINERS_PER_SITE; t++) {
      const [user] = await k("users")
        .insert({
          email: `trainer-${si}-${t}@bench.example`,
          display_name: `Trainer ${si + 1}.${t + 1}`,
          created_at: now,
        })
        .returning("id");
      const [trainer] = await k("trainers")
        .insert({ user_id: user.id, site_id: siteId, trainees_per_session: 2, hours_per_week: 30, created_at: now })
        .returning("id");
      await k("trainer_certifications").insert(
        [deviceIds[t % DEVICE_TYPES], deviceIds[(t + 1) % DEVICE_TYPES]].map((d) => ({
          trainer_id: trainer.id,
          device_type_id: d,
        })),
      );
      await k("trainer_working_pattern").insert(
        [1, 2, 3, 4, 5].map((weekday) => ({ trainer_id: trainer.id, weekday, start_time: "08:00", end_time: "14:00" })),
      );
      if (r2() < 0.3)
        await k("trainer_leave").insert({
          trainer_id: trainer.id,
          starts_on: "2027-02-01",
          ends_on: "2027-02-05",
          created_at: now,
        });
    }
  }
  const leave: Record<string, unknown>[] = [];
  const fields: Record<string, unknown>[] = [];
  for (const w of ids) {
    if (r2() < 0.05) {
      const monday = addWeeks(PLAN_START, Math.floor(r2() * 12));
      leave.push({ worker_id: w.id, starts_on: monday, ends_on: addDays(monday, 4), created_at: now });
    }
    if (r2() < 0.1)
      fields.push({ worker_id: w.id, max_hours_per_week: 4, priority: 1 + Math.floor(r2() * 3), updated_at: now });
  }
  await batch("worker_leave", leave);
  await batch("worker_training_fields", fields);
  return { workers: workerCount, siteIds, deptIds, deviceIds };
}

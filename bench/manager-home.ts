// Times the manager home's server-side work (readinessBoard: grouped SQL counts, organisation-wide
// disclosure control, slicing) on 20,000 INVENTED workers in a temporary SQLite file.
// Run: npx tsx bench/manager-home.ts [runs]   (prints median, p95 (nearest rank) and max; target: median
// under 300 ms — ours, not published)
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { mulberry32 as seeded } from "../app/compute/seeded-random";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-manager-"));
process.env.DATABASE_URL = path.join(dir, "bench.sqlite");
const runs = Number(process.argv[2] ?? 15);

const { db } = await import("../app/db.server");
const { readinessBoard } = await import("../app/models/readiness.server");

const STAGES = [
  "invited",
  "consented",
  "baselined",
  "forecast",
  "planned",
  "training",
  "proficient",
  "paused",
  "withdrawn",
];
const SITES = 4;
const DEPTS = 6;
const WORKERS = 20_000;
const k = db();
await k.migrate.latest();
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
for (let v = 0; v < 4; v++) {
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
const workers = Array.from({ length: WORKERS }, (_, i) => {
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
        scheduled_start: new Date(Date.UTC(2026, 11, 7 + 7 * s, 9)).toISOString(),
      });
    }
  }
}
await batch("device_courses", courses);
await batch("forecasts", forecasts);
await batch("training_sessions", sessions);

const scopes = [
  {
    name: "manager of 2 departments",
    scope: { allSites: false, siteIds: [], departmentIds: [deptIds[0], deptIds[1]] },
  },
  { name: "manager of a whole site", scope: { allSites: false, siteIds: [siteIds[0]], departmentIds: [] } },
];
const rows: Record<string, string | number>[] = [];
for (const { name, scope } of scopes) {
  const board = await readinessBoard(scope); // warm-up (statement cache, JIT); also shows the work is real
  const panels = (["stage", "ready", "planned", "medians"] as const).filter((p) => board[p].status === "ok").join(" ");
  const times: number[] = [];
  for (let i = 0; i < runs; i++) {
    const t0 = performance.now();
    await readinessBoard(scope);
    times.push(performance.now() - t0);
  }
  times.sort((a, b) => a - b);
  const median =
    times.length % 2 ? times[times.length >> 1] : (times[times.length / 2 - 1] + times[times.length / 2]) / 2;
  rows.push({
    scope: name,
    workers: WORKERS,
    departments: deptIds.length,
    runs,
    "panels computed": panels,
    "median ms": +median.toFixed(1),
    "p95 ms": +times[Math.min(times.length - 1, Math.ceil(0.95 * times.length) - 1)].toFixed(1),
    "max ms": +times[times.length - 1].toFixed(1),
    "target ms": 300,
    ok: median < 300 ? "yes" : "NO",
  });
}
console.table(rows);
await k.destroy();
fs.rmSync(dir, { recursive: true, force: true });

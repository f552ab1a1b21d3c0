import { execFile } from "node:child_process";
import path from "node:path";
import { promisify } from "node:util";
import type { Knex } from "knex";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import type { Scope } from "~/auth/scope";
import { solveAllocation } from "~/compute/allocation";
import { buildProblem } from "~/models/allocation-problem.server";
import { buildCohort } from "~/models/model-versions.server";
import { readinessBoard } from "~/models/readiness.server";
import { reliabilityByMeasure } from "~/models/reliability-report.server";
import { everythingAbout, exportSheets, myCalendar } from "~/models/worker-export.server";
import { runParametersSchema } from "~/schemas/allocation";
import { startPostgres, type ThrowawayPostgres } from "../../scripts/postgres";
import { freshDatabase, type TestDb } from "./helpers";

// The same demo seeded on SQLite and on PostgreSQL must give the same numbers: the value model (dates, instants,
// wall-clock times, numbers) and the order of every list the computations read are engine-independent.
// The reference is the other engine: every number below is compared between the two databases.
// Runs in the PostgreSQL pass of `npm test` (that pass's cluster); run alone on SQLite it starts its own cluster.
// Publish diffs (who is e-mailed on republishing) are checked on each engine by allocation.test.ts.

const root = path.resolve(__dirname, "../..");
const run = promisify(execFile);
const everywhere: Scope = { allSites: true, siteIds: [], departmentIds: [] };

type Fresh = Awaited<ReturnType<typeof freshDatabase>>;
let sqlite: Fresh;
let postgres: Fresh;
let ownCluster: ThrowawayPostgres | null = null;
const engines = () =>
  [
    ["sqlite", sqlite.knex],
    ["postgres", postgres.knex],
  ] as const;

async function migrateAndSeed(url: string): Promise<void> {
  const env: NodeJS.ProcessEnv = { ...process.env, DATABASE_URL: url };
  delete env.NODE_OPTIONS;
  for (const cmd of ["latest", "seed"])
    await run(process.execPath, ["--import", "tsx", path.join(root, "scripts/migrate.ts"), cmd], { cwd: root, env });
}

/** Runs app model code that uses the process-wide connection against one of the two databases. */
async function onDb<T>(k: TestDb, fn: () => Promise<T>): Promise<T> {
  const g = globalThis as unknown as { __limberlyDb?: Knex };
  const before = g.__limberlyDb;
  g.__limberlyDb = k;
  try {
    return await fn();
  } finally {
    g.__limberlyDb = before;
  }
}

/** Deep equality with doubles compared to 1e-9 (relative). */
function expectSame(a: unknown, b: unknown, where = "value"): void {
  if (typeof a === "number" && typeof b === "number") {
    if (Number.isInteger(a) && Number.isInteger(b)) expect(b, where).toBe(a);
    else expect(Math.abs(a - b), `${where}: ${a} vs ${b}`).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(a)));
    return;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    expect(b.length, `${where}.length`).toBe(a.length);
    for (const [i, x] of a.entries()) expectSame(x, b[i], `${where}[${i}]`);
    return;
  }
  if (a && b && typeof a === "object" && typeof b === "object") {
    expect(Object.keys(b).sort(), `${where} keys`).toEqual(Object.keys(a).sort());
    for (const key of Object.keys(a)) expectSame((a as never)[key], (b as never)[key], `${where}.${key}`);
    return;
  }
  expect(b, where).toEqual(a);
}

async function both<T>(fn: (k: TestDb) => Promise<T>): Promise<[T, T]> {
  return [await fn(sqlite.knex), await fn(postgres.knex)];
}

beforeAll(async () => {
  sqlite = await freshDatabase("parity", "sqlite");
  if (inject("engine") === "postgres") postgres = await freshDatabase("parity", "postgres");
  else {
    ownCluster = await startPostgres({ timeZone: "Europe/Berlin" });
    const { knexConfig } = await import("../../knexfile");
    const knex = (await import("knex")).default;
    const url = ownCluster.createDatabase("parity");
    const k = knex(knexConfig({ DATABASE_URL: url })) as TestDb;
    postgres = { url, knex: k, drop: () => k.destroy() };
  }
  await Promise.all([migrateAndSeed(sqlite.url), migrateAndSeed(postgres.url)]);
}, 240_000);

afterAll(async () => {
  await sqlite?.drop();
  await postgres?.drop();
  ownCluster?.stop();
});

describe("SQLite and PostgreSQL give the same numbers for the same demo", () => {
  it("read dates, wall-clock times and instants back in one shape", async () => {
    for (const [name, k] of engines()) {
      const s = await k("assessment_sessions").orderBy("id").first("assessed_on", "created_at");
      expect(s.assessed_on, name).toMatch(/^\d{4}-\d{2}-\d{2}$/);
      expect(s.created_at, name).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);
      const t = await k("training_sessions").whereNotNull("scheduled_end").orderBy("id").first("scheduled_start");
      expect(t.scheduled_start, name).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}$/);
      const n = await k("workers").count({ n: "*" }).first();
      expect(typeof n!.n, name).toBe("number");
    }
    // Rows without clock-dependent columns are identical, value for value.
    for (const [table, cols] of [
      ["training_sessions", ["id", "worker_id", "scheduled_start", "scheduled_end", "duration_hours", "task_score"]],
      ["device_courses", ["id", "worker_id", "device_type_id", "started_on", "proficient_on", "hours_to_proficiency"]],
      ["assessment_results", ["id", "session_id", "measure_id", "value", "z_score"]],
      ["assessment_sessions", ["id", "worker_id", "assessed_on"]],
      ["worker_leave", ["id", "worker_id", "starts_on", "ends_on"]],
      ["trainer_leave", ["id", "trainer_id", "starts_on", "ends_on"]],
      ["unit_maintenance_windows", ["id", "device_unit_id", "starts_on", "ends_on"]],
    ] as const) {
      const [a, b] = await both((k) => k(table).select(cols).orderBy("id"));
      expect(a.length, table).toBeGreaterThan(0);
      expectSame(a, b, table);
    }
  });

  it("fit the same model versions on the same cohorts", async () => {
    const [a, b] = await both((k) =>
      k("model_versions")
        .select(
          "device_type_id",
          "version_number",
          "status",
          "measure_ids",
          "cohort_size",
          "excluded",
          "coefficients",
          "residual_sd",
          "r_squared",
          "loocv_mae_hours",
        )
        .orderBy(["device_type_id", "version_number"]),
    );
    expect(a.length).toBeGreaterThan(0);
    expectSame(a, b, "model_versions");
    for (const v of a) {
      const ids = JSON.parse(v.measure_ids) as number[];
      const [ca, cb] = await both((k) => buildCohort(v.device_type_id, ids, k));
      expect(ca.rows.length).toBeGreaterThan(0);
      expectSame(ca, cb, `cohort of device type ${v.device_type_id}`);
    }
  });

  it("store the same forecasts", async () => {
    const [a, b] = await both((k) =>
      k("forecasts as f")
        .join("workers as w", "w.id", "f.worker_id")
        .select(
          "w.employee_number",
          "f.device_type_id",
          "f.median_hours",
          "f.lower_hours",
          "f.upper_hours",
          "f.planning_hours",
          "f.hours_done",
          "f.remaining_hours",
          "f.progress_status",
        )
        .orderBy(["w.employee_number", "f.device_type_id"]),
    );
    expect(a.length).toBeGreaterThan(20);
    expectSame(a, b, "forecasts");
  });

  it("show the same readiness medians and retest reliability", async () => {
    const [ba, bb] = await both((k) => onDb(k, () => readinessBoard(everywhere)));
    expect(ba.medians.status).toBe("ok");
    expectSame(ba.medians, bb.medians, "medians");
    expectSame(ba.planned, bb.planned, "planned ready weeks");
    expectSame(ba.ready, bb.ready, "ready");
    const [ra, rb] = await both((k) => reliabilityByMeasure(k));
    expect(ra.some((m) => (m.n ?? 0) > 0)).toBe(true);
    expectSame(ra, rb, "reliability");
  });

  it("export the same record and calendar for a worker", async () => {
    const [ea, eb] = await both((k) =>
      onDb(k, async () => {
        const w = await k("workers").where({ employee_number: "HV-00001" }).first("id");
        const about = await everythingAbout(w.id);
        if (!about) throw new Error("HV-00001 is in the demo");
        const { generatedAt: _, ...record } = about;
        const sheets = exportSheets({ ...record, generatedAt: "fixed" });
        const ics = (await myCalendar(w.id, new Date("2026-12-01T00:00:00Z"))).replace(/^DTSTAMP:.*$/gm, "");
        return { record, sheets, ics };
      }),
    );
    expect(ea.record.sessions.length).toBeGreaterThan(0);
    expect(ea.ics).toContain("BEGIN:VEVENT");
    expect(JSON.stringify(ea.record)).not.toMatch(/GMT|Coordinated Universal Time/);
    expectSame(ea, eb, "worker export");
  });

  it("build the same allocation problem and solve it to the same plan", async () => {
    const params = runParametersSchema.parse({
      startDate: "2026-12-07",
      horizonWeeks: 6,
      fairnessShare: 0.2,
    });
    const [pa, pb] = await both((k) => buildProblem(params, everywhere, k));
    expect(JSON.stringify(pb.problem)).toBe(JSON.stringify(pa.problem));
    expect(JSON.stringify(pb.calendar)).toBe(JSON.stringify(pa.calendar));
    expectSame(pa.excluded, pb.excluded, "excluded");
    // The seeded maintenance windows and leave are in the problem (dates compared as dates, not as text).
    expect(pa.calendar.devices.some((d) => d.units.some((u) => u.unavailableDates.length > 0))).toBe(true);
    expect(pa.calendar.workers.some((w) => w.unavailableDates.length > 0)).toBe(true);
    expect(pa.problem.workers.length).toBeGreaterThan(0);
    const [sa, sb] = [await solveAllocation(pa.problem), await solveAllocation(pb.problem)];
    expect(JSON.stringify(sb)).toBe(JSON.stringify(sa));
    expect(sa.assignments.length).toBeGreaterThan(0);
  });
});

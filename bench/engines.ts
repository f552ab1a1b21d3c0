// The same server-side work on SQLite and on PostgreSQL, side by side: the manager home's readinessBoard
// and the allocation problem builder (buildProblem) on one INVENTED 20,000-worker organisation (bench/_org.ts),
// loaded into a temporary SQLite file and into a throwaway PostgreSQL cluster (scripts/postgres.ts), both
// migrated with the project's Knex config. Each engine runs in its own child process (the app's db() reads
// DATABASE_URL once per process), one after the other so they do not share the CPU.
// Run: npx tsx bench/engines.ts [board runs] [problem runs]   (defaults 20 and 3;
// each case's first call, whose result is compared across engines, is the untimed warm-up)
// Target (ours, not published): readinessBoard median under 300 ms on both engines, as for bench/manager-home.ts.
// The problem builder has no target here; its times are reported for both engines. It dominates the run time
// (tens of seconds a call for the whole organisation on a busy 2-core machine), hence only 3 runs by default.
import { spawnSync } from "node:child_process";
import { createHash } from "node:crypto";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import type { Spread } from "./_timing";

const BOARD_TARGET_MS = 300;
const CHILD = "--engine-child";

interface CaseResult extends Spread {
  name: string;
  /** sha256 of the result as JSON: the same on both engines when they compute the same thing */
  digest: string;
  /** a short size of the result, to show the work is real */
  size: string;
}
interface EngineResult {
  engine: string;
  fillSeconds: number;
  cases: CaseResult[];
}

const digest = (v: unknown) => createHash("sha256").update(JSON.stringify(v)).digest("hex").slice(0, 12);

async function child(boardRuns: number, problemRuns: number): Promise<EngineResult> {
  const { db } = await import("../app/db.server");
  const { readinessBoard } = await import("../app/models/readiness.server");
  const { buildProblem } = await import("../app/models/allocation-problem.server");
  const { fillBenchOrganisation, PLAN_START } = await import("./_org");
  const { timeAsync } = await import("./_timing");
  const k = db();
  const engine = k.client.config.client === "pg" ? "PostgreSQL" : "SQLite";
  const t0 = performance.now();
  await k.migrate.latest();
  const org = await fillBenchOrganisation(k);
  if (engine === "PostgreSQL") await k.raw("ANALYZE"); // fresh statistics, as autovacuum would have soon
  const fillSeconds = Number(((performance.now() - t0) / 1000).toFixed(1));
  console.error(`${engine}: migrated and filled ${org.workers} workers in ${fillSeconds} s; timing…`);

  const cases: CaseResult[] = [];
  const boards = [
    {
      name: "readinessBoard · 2 departments",
      scope: { allSites: false, siteIds: [], departmentIds: org.deptIds.slice(0, 2) },
    },
    { name: "readinessBoard · 1 site", scope: { allSites: false, siteIds: [org.siteIds[0]], departmentIds: [] } },
    { name: "readinessBoard · organisation", scope: { allSites: true, siteIds: [], departmentIds: [] } },
  ];
  for (const { name, scope } of boards) {
    const board = await readinessBoard(scope);
    const panels = (["stage", "ready", "planned", "medians"] as const).filter((p) => board[p].status === "ok");
    const spread = await timeAsync(() => readinessBoard(scope), boardRuns, { warmUp: false });
    cases.push({ name, ...spread, digest: digest(board), size: `panels: ${panels.join(" ")}` });
  }
  const params = {
    startDate: PLAN_START,
    horizonWeeks: 12,
    pool: { siteIds: [] as number[], departmentIds: [] as number[], includeProficientElsewhere: false },
    fairnessShare: 0.1,
    whatIf: { addUnits: [], removeTrainerIds: [] },
  };
  const problems = [
    { name: "buildProblem · 1 site, 12 weeks", pool: { ...params.pool, siteIds: [org.siteIds[0]] } },
    { name: "buildProblem · organisation, 12 weeks", pool: params.pool },
  ];
  const everywhere = { allSites: true, siteIds: [], departmentIds: [] };
  for (const { name, pool } of problems) {
    const p = { ...params, pool };
    const snap = await buildProblem(p, everywhere);
    const spread = await timeAsync(() => buildProblem(p, everywhere), problemRuns, { warmUp: false });
    const { workers, deviceTypes, trainers } = snap.problem;
    cases.push({
      name,
      ...spread,
      digest: digest(snap),
      size: `${workers.length} in pool, ${snap.excluded.length} excluded, ${deviceTypes.length} devices, ${trainers.length} trainers`,
    });
  }
  await k.destroy();
  return { engine, fillSeconds, cases };
}

async function parent(boardRuns: number, problemRuns: number): Promise<number> {
  const { startPostgres } = await import("../scripts/postgres");
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-engines-"));
  const pg = await startPostgres();
  const self = new URL(import.meta.url).pathname;
  const results: EngineResult[] = [];
  try {
    for (const url of [path.join(dir, "bench.sqlite"), pg.url]) {
      const r = spawnSync(process.execPath, ["--import", "tsx", self, CHILD, String(boardRuns), String(problemRuns)], {
        env: { ...process.env, DATABASE_URL: url },
        stdio: ["ignore", "pipe", "inherit"],
        encoding: "utf8",
      });
      if (r.status !== 0) {
        console.error(`the ${url === pg.url ? "PostgreSQL" : "SQLite"} run failed (exit ${r.status ?? r.signal})`);
        return 1;
      }
      results.push(JSON.parse(r.stdout.trim().split("\n").at(-1)!));
    }
  } finally {
    pg.stop();
    fs.rmSync(dir, { recursive: true, force: true });
  }
  const [lite, post] = results;
  const rows = lite.cases.map((a, i) => {
    const b = post.cases[i];
    const target = a.name.startsWith("readinessBoard");
    return {
      case: a.name,
      runs: a.runs,
      "SQLite median ms": a.medianMs,
      "SQLite p95 ms": a.p95Ms,
      "PostgreSQL median ms": b.medianMs,
      "PostgreSQL p95 ms": b.p95Ms,
      "PG / SQLite": Number((b.medianMs / a.medianMs).toFixed(2)),
      "target ms": target ? `< ${BOARD_TARGET_MS}` : "—",
      ok: target ? (a.medianMs < BOARD_TARGET_MS && b.medianMs < BOARD_TARGET_MS ? "yes" : "NO") : "—",
      "same result": a.digest === b.digest ? "yes" : "NO",
      result: a.size === b.size ? a.size : `SQLite ${a.size} / PostgreSQL ${b.size}`,
    };
  });
  console.table(rows);
  console.log(`fill (migrate + 20,000 workers): SQLite ${lite.fillSeconds} s, PostgreSQL ${post.fillSeconds} s`);
  // Other work on the machine inflates every time: the load average says how busy it was.
  console.log(
    `machine: ${os.cpus().length} cores, load average ${os
      .loadavg()
      .map((l) => l.toFixed(1))
      .join(" / ")} (1 / 5 / 15 min)`,
  );
  const cols = Object.keys(rows[0]) as (keyof (typeof rows)[0])[];
  console.log(`\n| ${cols.join(" | ")} |\n|${cols.map(() => "---").join("|")}|`);
  for (const r of rows) console.log(`| ${cols.map((c) => r[c]).join(" | ")} |`);
  return 0;
}

const [mode, ...rest] = process.argv.slice(2);
if (mode === CHILD) {
  const result = await child(Number(rest[0]), Number(rest[1]));
  console.log(JSON.stringify(result));
  process.exit(0);
} else {
  process.exit(await parent(Number(mode ?? 20), Number(rest[0] ?? 3)));
}

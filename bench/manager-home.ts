// Times the manager home's server-side work (readinessBoard: grouped SQL counts, organisation-wide
// disclosure control, slicing) on 20,000 INVENTED workers in a temporary SQLite file.
// Run: npx tsx bench/manager-home.ts [runs]   (prints median, p95 (nearest rank) and max; target: median
// under 300 ms — ours, not published)
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { fillBenchOrganisation } from "./_org";
import { timeAsync } from "./_timing";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-manager-"));
process.env.DATABASE_URL = path.join(dir, "bench.sqlite");
const runs = Number(process.argv[2] ?? 15);

const { db } = await import("../app/db.server");
const { readinessBoard } = await import("../app/models/readiness.server");

const k = db();
await k.migrate.latest();
const { workers: WORKERS, siteIds, deptIds } = await fillBenchOrganisation(k);

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
  const { medianMs: median, p95Ms, maxMs } = await timeAsync(() => readinessBoard(scope), runs, { warmUp: false });
  rows.push({
    scope: name,
    workers: WORKERS,
    departments: deptIds.length,
    runs,
    "panels computed": panels,
    "median ms": median,
    "p95 ms": p95Ms,
    "max ms": maxMs,
    "target ms": 300,
    ok: median < 300 ? "yes" : "NO",
  });
}
console.table(rows);
await k.destroy();
fs.rmSync(dir, { recursive: true, force: true });

// Benchmark: importing a 10,000-row roster (target under 5 s), end to end through the same code
// the import page uses — CSV read (csv-parse, streamed), zod row checks, upsert plan against the workers
// on file, and the one-transaction write — on a fresh SQLite file with the demo sites. Also the second
// import of the same people with changes (10,000 updates), an XLSX read of the same roster, and a
// worker-list page sorted by name over the 10,000+ workers.
// Run: npx tsx bench/roster-import.ts — prints a table of times against targets and exits.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { performance } from "node:perf_hooks";
import { pathToFileURL } from "node:url";
import ExcelJS from "exceljs";

const ROWS = 10_000;
const SITES = [
  ["NY", "North Yard"],
  ["RS", "Riverside"],
  ["EG", "Eastgate"],
];
const DEPTS = [
  ["CH", "Cable Harness"],
  ["FA", "Final Assembly"],
  ["KT", "Kitting"],
  ["IN", "Inspection"],
  ["PP", "Paint Prep"],
];

function rosterLines(rows: number, variant: number): string[][] {
  return Array.from({ length: rows }, (_, i) => [
    `BX-${String(i + 1).padStart(6, "0")}`,
    `Given${i}`,
    `Family${(i * 7919) % 5000}${variant ? "x" : ""}`,
    `w${i}@bench.example`,
    SITES[i % 3][0],
    DEPTS[(i >> 2) % 5][1],
  ]);
}
const HEADER = ["Employee number", "First name", "Last name", "E-mail", "Site", "Department"];
const toCsv = (rows: string[][]) =>
  new TextEncoder().encode(`${[HEADER, ...rows].map((r) => r.join(",")).join("\n")}\n`);

export async function main() {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-roster-"));
  process.env.DATABASE_URL = path.join(dir, "bench.sqlite");
  const { db } = await import("../app/db.server");
  const { readRosterFile, planRoster, applyRosterPlan, listWorkers } = await import("../app/models/roster.server");
  const { guessMapping } = await import("../app/schemas/roster");
  const k = db();
  try {
    await k.migrate.latest();
    const now = new Date().toISOString();
    const [org] = await k("organisations").insert({ name: "Bench (invented)", created_at: now }).returning("id");
    for (const [code, name] of SITES) {
      const [s] = await k("sites").insert({ organisation_id: org.id, code, name, created_at: now }).returning("id");
      for (const [dc, dn] of DEPTS)
        await k("departments").insert({ site_id: s.id, code: dc, name: dn, created_at: now });
    }
    const scope = { allSites: true, siteIds: [], departmentIds: [] };

    const run = async (bytes: Uint8Array, filename: string) => {
      const t0 = performance.now();
      const table = await readRosterFile(filename, bytes);
      const t1 = performance.now();
      const summary = await k.transaction(async (trx) =>
        applyRosterPlan(trx, await planRoster(table.rows, guessMapping(table.headers), scope, trx), null),
      );
      return { readMs: t1 - t0, totalMs: performance.now() - t0, summary };
    };

    const first = await run(toCsv(rosterLines(ROWS, 0)), "roster.csv");
    const second = await run(toCsv(rosterLines(ROWS, 1)), "roster.csv");
    const wb = new ExcelJS.Workbook();
    const ws = wb.addWorksheet("Roster");
    ws.addRow(HEADER);
    for (const r of rosterLines(ROWS, 1)) ws.addRow(r);
    const xlsx = new Uint8Array(await wb.xlsx.writeBuffer());
    const third = await run(xlsx, "roster.xlsx");
    const timeList = async (sort: string) => {
      await listWorkers(scope, { sort, dir: "asc", page: 200, size: 25 }, {}); // warm-up
      const t = performance.now();
      const page = await listWorkers(scope, { sort, dir: "asc", page: 200, size: 25 }, {});
      return { page, ms: performance.now() - t };
    };
    const { page, ms: listMs } = await timeList("name");
    const { ms: lastMs } = await timeList("lastBaseline");

    if (
      first.summary.created !== ROWS ||
      second.summary.updated !== ROWS ||
      third.summary.unchanged !== ROWS ||
      page.total !== ROWS
    ) {
      throw new Error(
        `unexpected outcome: ${JSON.stringify({ first: first.summary.created, second: second.summary.updated, third: third.summary.unchanged, total: page.total })}`,
      );
    }
    const results = [
      { name: `CSV import, ${ROWS.toLocaleString("en")} new workers`, timeMs: first.totalMs, targetMs: 5000 },
      { name: "  of which: reading the CSV", timeMs: first.readMs, targetMs: 1000 },
      { name: `CSV import, ${ROWS.toLocaleString("en")} updates`, timeMs: second.totalMs, targetMs: 5000 },
      { name: `XLSX import, ${ROWS.toLocaleString("en")} unchanged`, timeMs: third.totalMs, targetMs: 5000 },
      { name: "Worker list page 200 sorted by name", timeMs: listMs, targetMs: 200 },
      { name: "Worker list page 200 sorted by last baseline", timeMs: lastMs, targetMs: 200 },
    ].map((r) => ({ ...r, timeMs: Number(r.timeMs.toFixed(1)), pass: r.timeMs < r.targetMs }));
    console.table(
      results.map((r) => ({
        name: r.name,
        "time ms": r.timeMs,
        "target ms": r.targetMs,
        result: r.pass ? "pass" : "FAIL",
      })),
    );
    return results;
  } finally {
    await k.destroy();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

// Run when executed directly (npx tsx bench/roster-import.ts); importing the file only exposes main().
if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) await main();

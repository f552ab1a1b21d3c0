// Benchmark: the two spreadsheet paths a hostile or simply large organisation can lean on.
// 1. Refusing a 1 GB-expanding XLSX: a roster workbook whose shared strings inflate from about 1 MB to 1 GB
//    (made here in 1 MB chunks with fflate), handed to saveRosterUpload, the model call the upload page
//    makes. It must be refused from the zip directory, before anything is inflated. Measured in a child
//    process so that its peak memory (getrusage maxRSS) is not the making of the bomb: median time of
//    5 refusals, and the peak resident memory above what the child held before the first refusal.
// 2. Exporting 200,000 INVENTED workers from a temporary SQLite file through the roster export's streamed
//    response (rosterExportPages + streamedXlsxResponse), the body read to its end as a client would. The
//    resident memory above the start is sampled every 20 ms (its peak must stay small), and the memory still
//    held after a full collection must not grow between 10 % of the rows and the end (flat); the event
//    loop's longest stall shows that the server keeps answering (a health check) during the export.
// Targets (ours, from the security review's own bounds): refusal under 1 s and under 100 MB extra memory;
// export peak under 150 MB extra, retained growth under 10 MB, longest event-loop stall under 500 ms.
// Run: npx tsx bench/uploads.ts — prints one table against the targets and exits (non-zero on a FAIL).
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { monitorEventLoopDelay, performance } from "node:perf_hooks";
import { fileURLToPath, pathToFileURL } from "node:url";
import v8 from "node:v8";
import vm from "node:vm";
import { rosterWorkbook, sharedStringsBomb } from "../tests/integration/xlsx-fixtures";

const GB = 1024 * 1024 * 1024;
const MB = 1024 * 1024;
const WORKERS = 200_000;
const CHILD = "--refuse-child";

interface Row {
  name: string;
  value: number;
  unit: string;
  target: number;
}

async function refuseChild(file: string) {
  const bytes = new Uint8Array(fs.readFileSync(file));
  const { saveRosterUpload } = await import("../app/models/roster.server");
  const principal = { kind: "user", user: { id: 0 } } as unknown as Parameters<typeof saveRosterUpload>[0];
  const refuse = async () => {
    try {
      await saveRosterUpload(principal, { name: "bomb.xlsx", bytes });
      return "accepted";
    } catch (e) {
      return (e as Error).message;
    }
  };
  const rssBefore = process.memoryUsage().rss;
  const maxBefore = process.resourceUsage().maxRSS * 1024;
  const times: number[] = [];
  let message = "";
  for (let i = 0; i < 5; i++) {
    const t = performance.now();
    message = await refuse();
    times.push(performance.now() - t);
  }
  const peakExtra = Math.max(0, process.resourceUsage().maxRSS * 1024 - Math.max(rssBefore, maxBefore));
  times.sort((a, b) => a - b);
  process.stdout.write(JSON.stringify({ medianMs: times[2], peakExtra, message }));
}

async function refusal(): Promise<Row[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-bomb-"));
  try {
    const base = await rosterWorkbook([
      ["Employee number", "Given name", "Family name", "Site", "Department"],
      ["BX-000001", "Invented", "Person", "S0", "D0"],
    ]);
    const bomb = await sharedStringsBomb(base, GB);
    const file = path.join(dir, "bomb.xlsx");
    fs.writeFileSync(file, bomb);
    const r = spawnSync(process.execPath, ["--import", "tsx", fileURLToPath(import.meta.url), CHILD, file], {
      encoding: "utf8",
      env: { ...process.env, DATABASE_URL: path.join(dir, "unused.sqlite") },
    });
    if (r.status !== 0) throw new Error(`refusal child failed: ${r.stderr}`);
    const out = JSON.parse(r.stdout) as { medianMs: number; peakExtra: number; message: string };
    if (!/zip bomb|unpacks to more than/.test(out.message)) throw new Error(`not refused: ${out.message}`);
    console.log(`A ${(bomb.byteLength / MB).toFixed(2)} MB file expanding to 1 GB: "${out.message}"`);
    return [
      { name: "refuse a 1 GB-expanding XLSX: time", value: out.medianMs, unit: "ms", target: 1000 },
      { name: "refuse a 1 GB-expanding XLSX: peak extra memory", value: out.peakExtra / MB, unit: "MB", target: 100 },
    ];
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

async function exportRows(): Promise<Row[]> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-bench-export-"));
  process.env.DATABASE_URL = path.join(dir, "bench.sqlite");
  const { db } = await import("../app/db.server");
  const { rosterExportPages, ROSTER_EXPORT_COLUMNS } = await import("../app/models/roster.server");
  const { streamedXlsxResponse } = await import("../app/xlsx.server");
  const k = db();
  try {
    await k.migrate.latest();
    const now = new Date().toISOString();
    const [org] = await k("organisations").insert({ name: "Bench (invented)", created_at: now }).returning("id");
    const [site] = await k("sites")
      .insert({ organisation_id: org.id, code: "S0", name: "Site 1", created_at: now })
      .returning("id");
    const [dept] = await k("departments")
      .insert({ site_id: site.id, code: "D0", name: "Dept 1", created_at: now })
      .returning("id");
    await k.transaction(async (trx) => {
      for (let i = 0; i < WORKERS; i += 500) {
        const rows = Array.from({ length: Math.min(500, WORKERS - i) }, (_, j) => {
          const n = i + j;
          return {
            employee_number: `BX-${String(n).padStart(7, "0")}`,
            given_name: n % 97 === 0 ? `=Given${n}` : `Given${n}`,
            family_name: `Family${(n * 7919) % 100_000}`,
            email: n % 3 ? `w${n}@bench.example` : null,
            site_id: site.id,
            department_id: dept.id,
            stage: "invited",
            created_at: now,
            updated_at: now,
          };
        });
        await trx.batchInsert("workers", rows, 100);
      }
    });
    const scope = { allSites: true, siteIds: [], departmentIds: [] };
    // Retained memory (after a full collection) when 10 % of the rows are out and at the end: flat means the
    // second is no larger than the first, whatever the row count.
    v8.setFlagsFromString("--expose-gc");
    const gc = vm.runInNewContext("gc") as () => void;
    const retained = () => {
      gc();
      const m = process.memoryUsage();
      return m.heapUsed + m.arrayBuffers;
    };
    const start = process.memoryUsage().rss;
    let peak = 0;
    let at10 = 0;
    let bytes = 0;
    let rowsOut = 0;
    const countingPages = async function* () {
      for await (const page of rosterExportPages(scope)) {
        rowsOut += page.length;
        if (!at10 && rowsOut >= WORKERS / 10) at10 = retained();
        yield page;
      }
    };
    const sampler = setInterval(() => {
      peak = Math.max(peak, process.memoryUsage().rss - start);
    }, 20);
    const loop = monitorEventLoopDelay({ resolution: 10 });
    loop.enable();
    const t = performance.now();
    const res = streamedXlsxResponse(
      { name: "Roster", columns: ROSTER_EXPORT_COLUMNS, pages: countingPages() },
      "x.xlsx",
    );
    const reader = res.body!.getReader();
    for (;;) {
      const { done, value } = await reader.read();
      if (done) break;
      bytes += value.byteLength;
    }
    const ms = performance.now() - t;
    loop.disable();
    clearInterval(sampler);
    const atEnd = retained();
    if (rowsOut !== WORKERS) throw new Error(`exported ${rowsOut} rows, not ${WORKERS}`);
    console.log(
      `${WORKERS.toLocaleString("en")} workers exported: ${(bytes / MB).toFixed(1)} MB of XLSX in ${(ms / 1000).toFixed(1)} s`,
    );
    return [
      { name: `export ${WORKERS.toLocaleString("en")} workers: time`, value: ms, unit: "ms", target: 120_000 },
      { name: "  peak extra memory (resident)", value: peak / MB, unit: "MB", target: 150 },
      {
        name: "  retained memory growth after the first 10 % of rows",
        value: Math.max(0, atEnd - at10) / MB,
        unit: "MB",
        target: 10,
      },
      { name: "  longest event-loop stall", value: loop.max / 1e6, unit: "ms", target: 500 },
    ];
  } finally {
    await k.destroy();
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

export async function main() {
  const rows = [...(await refusal()), ...(await exportRows())].map((r) => ({
    ...r,
    value: Number(r.value.toFixed(1)),
    pass: r.value < r.target,
  }));
  console.table(
    rows.map((r) => ({
      name: r.name,
      value: r.value,
      unit: r.unit,
      target: `< ${r.target}`,
      result: r.pass ? "pass" : "FAIL",
    })),
  );
  return rows;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  if (process.argv[2] === CHILD) await refuseChild(process.argv[3]);
  else if (!(await main()).every((r) => r.pass)) process.exitCode = 1;
}

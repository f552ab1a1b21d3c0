import crypto from "node:crypto";
import ExcelJS from "exceljs";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLinkedTables } from "../../app/compute/disclosure";
import { STAGE_BAND_OF, STAGE_BANDS, STAGES, type Stage } from "../../app/domain/stages";
import routes from "../../app/routes";
import { READINESS_SOURCES } from "../../migrations/20261205040000_readiness_generation";
import {
  type Browserless,
  baseUrl,
  freshConsentedWorker,
  PERSONA,
  readinessGenerationNow,
  readinessSettled,
  signIn,
  testDb,
} from "./helpers";
import { concretePath, flattenRoutes, type RouteEntry } from "./route-walk";

// What a manager's pages, export and API send contains nothing personal; department and site
// views together cannot be differenced; manager API keys reach no worker-level route.
// Reference for the disclosure rule: docs/consent-and-disclosure.md (counts of 1 … threshold−1 hidden, and nothing hidden
// recoverable exactly from what is published together); audited with the LP attacker in
// app/compute/disclosure.ts, itself checked against HiGHS in tests/reference/disclosure.test.ts.

const THRESHOLD = 5;
const RUN_ID = 990_001; // published-plan sessions added for this file and removed afterwards
let manager: Browserless;
let nyKey = "";
let nyKeyId = 0;
const pausedIds: { id: number; stage: string }[] = [];

async function insertKey(role: string, siteIds: number[]): Promise<{ key: string; id: number }> {
  const prefix = crypto.randomBytes(6).toString("hex");
  const secret = crypto.randomBytes(32).toString("base64url");
  const [row] = await testDb()("api_keys")
    .insert({
      name: `readiness test ${role}`,
      prefix,
      secret_hash: crypto.createHash("sha256").update(secret).digest("hex"),
      role,
      created_at: new Date().toISOString(),
    })
    .returning("id");
  const id = typeof row === "object" ? row.id : row;
  for (const s of siteIds) await testDb()("api_key_sites").insert({ api_key_id: id, site_id: s });
  return { key: `lbk_${prefix}_${secret}`, id };
}

beforeAll(async () => {
  const db = testDb();
  const ny = await db("sites").where({ code: "NY" }).first("id");
  // Small groups on purpose: two North Yard Kitting workers paused, so the site view must hide them.
  const kt = await db("departments").where({ site_id: ny.id, code: "KT" }).first("id");
  const two = await db("workers")
    .where({ department_id: kt.id })
    .whereNotIn("stage", ["paused", "withdrawn"])
    .orderBy("id")
    .limit(2)
    .select("id", "stage");
  for (const w of two) pausedIds.push(w);
  await db("workers")
    .whereIn(
      "id",
      two.map((w) => w.id),
    )
    .update({ stage: "paused" });
  // A published plan: sessions for a handful of workers in every North Yard department.
  const device = await db("device_types").orderBy("id").first("id");
  const workers = await db("workers")
    .where({ site_id: ny.id })
    .whereNot("stage", "withdrawn")
    .orderBy("id")
    .select("id");
  const rows = workers
    .filter((_, i) => i % 3 === 0)
    .flatMap((w, i) =>
      [0, 1].map((k) => ({
        worker_id: w.id,
        device_type_id: device.id,
        allocation_run_id: RUN_ID,
        status: "scheduled",
        created_at: "2026-12-01T00:00:00.000Z",
        scheduled_start: new Date(Date.UTC(2026, 11, 7 + 7 * ((i % 6) + k))).toISOString(),
      })),
    );
  for (let i = 0; i < rows.length; i += 100) await db("training_sessions").insert(rows.slice(i, i + 100));
  // Sessions count only when their run is published.
  await db("allocation_runs").insert({
    id: RUN_ID,
    label: "readiness test plan",
    parameters: "{}",
    status: "done",
    created_at: "2026-12-01T00:00:00.000Z",
    published_at: "2026-12-01T00:00:00.000Z",
  });
  ({ client: manager } = await signIn(PERSONA.manager));
  ({ key: nyKey, id: nyKeyId } = await insertKey("manager", [ny.id]));
  // The writes above are protected in the background; the tests read the figures of today's data.
  await readinessSettled((p) => manager.request(p));
});

afterAll(async () => {
  const db = testDb();
  await db("training_sessions").where({ allocation_run_id: RUN_ID }).delete();
  await db("allocation_runs").where({ id: RUN_ID }).delete();
  for (const w of pausedIds) await db("workers").where({ id: w.id }).update({ stage: w.stage });
  await db("api_keys").where({ id: nyKeyId }).update({ revoked_at: new Date().toISOString() });
});

async function xlsxText(buf: ArrayBuffer): Promise<string> {
  const wb = new ExcelJS.Workbook();
  await wb.xlsx.load(buf);
  const parts: string[] = [];
  wb.eachSheet((ws) => ws.eachRow((row) => row.eachCell((c) => parts.push(String(c.value ?? "")))));
  return parts.join("\n");
}

type WorkerRow = { id: number; given_name: string; family_name: string; email: string | null; employee_number: string };

/** Every trace of an individual worker in the given payloads. */
function scanForPersonalData(payloads: [string, string][], workers: WorkerRow[]): string[] {
  const leaks: string[] = [];
  for (const [where, body] of payloads) {
    const lower = body.toLowerCase();
    for (const w of workers) {
      const name = `${w.given_name} ${w.family_name}`.toLowerCase();
      if (lower.includes(name)) leaks.push(`${where}: name ${name}`);
      if (w.email && lower.includes(w.email.toLowerCase())) leaks.push(`${where}: e-mail ${w.email}`);
      if (lower.includes(w.employee_number.toLowerCase())) leaks.push(`${where}: employee number ${w.employee_number}`);
      // An id appears only next to a key that names it; bare small numbers are counts.
      if (new RegExp(`worker[_ -]?id\\W{0,6}${w.id}\\b`, "i").test(body)) leaks.push(`${where}: worker id ${w.id}`);
    }
    if (/worker[_-]?id|employee[_-]?number|given[_-]?name|family[_-]?name/i.test(body))
      leaks.push(`${where}: a personal field name`);
  }
  return leaks;
}

describe("manager payloads contain nothing personal", () => {
  it("no demo worker's name, e-mail, employee number or id in any page, .data, export or API response", async () => {
    const workers: WorkerRow[] = await testDb()("workers").select(
      "id",
      "given_name",
      "family_name",
      "email",
      "employee_number",
    );
    expect(workers.length).toBeGreaterThan(100);
    const payloads: [string, string][] = [];
    for (const path of ["/readiness", "/readiness.data", "/readiness/sites", "/readiness/sites.data"]) {
      const res = await manager.request(path);
      expect(res.status, path).toBe(200);
      payloads.push([path, await res.text()]);
    }
    const x = await manager.request("/readiness/export.xlsx");
    expect(x.status).toBe(200);
    expect(x.headers.get("Content-Type")).toContain("spreadsheetml");
    payloads.push(["/readiness/export.xlsx", await xlsxText(await x.arrayBuffer())]);
    for (const g of ["site", "department", "deviceType", "stage"]) {
      const res = await manager.request(`/api/v1/readiness?groupBy=${g}`);
      expect(res.status, g).toBe(200);
      payloads.push([`api ${g}`, await res.text()]);
    }
    // The scan must see the real page: the board is there with its tables and the planned chart data.
    const home = payloads.find(([p]) => p === "/readiness")![1];
    expect(home).toContain("People by readiness stage");
    expect(home).toContain("North Yard · Cable Harness");
    expect(payloads.find(([p]) => p === "/readiness.data")![1]).toContain("Weeks of");
    expect(payloads.find(([p]) => p === "/readiness/export.xlsx")![1]).toContain("North Yard · Final Assembly");

    expect(scanForPersonalData(payloads, workers)).toEqual([]);
  });
});

describe("exports that add up", () => {
  // Spreadsheet convention (common practice): a figure is a number cell so SUM works; text in a
  // number column breaks it. Checked by reading the file back with exceljs, a reader outside the app.
  it("every XLSX figure is a number or empty, the hidden column names each empty one, and shown parts sum to shown totals", async () => {
    const x = await manager.request("/readiness/export.xlsx");
    expect(x.status).toBe(200);
    const wb = new ExcelJS.Workbook();
    await wb.xlsx.load(await x.arrayBuffer());
    let hiddenSeen = 0;
    let sumsChecked = 0;
    for (const ws of wb.worksheets) {
      const header = (ws.getRow(1).values as unknown[]).slice(1).map(String);
      const hiddenCol = header.indexOf("Hidden in this row");
      expect(hiddenCol, ws.name).toBeGreaterThan(0);
      const totalCol = header.indexOf("Total");
      const figureCols = header.slice(1, hiddenCol).map((_, k) => k + 1);
      for (let r = 2; r <= ws.rowCount; r++) {
        const row = ws.getRow(r);
        const label = row.getCell(1).value;
        if (label === null || label === undefined) break; // the note below the table
        const values = figureCols.map((c) => row.getCell(c + 1).value);
        const named = String(row.getCell(hiddenCol + 1).value ?? "")
          .split(", ")
          .filter(Boolean);
        values.forEach((v, k) => {
          const col = header[figureCols[k]];
          if (v === null || v === undefined) {
            hiddenSeen++;
            expect(named, `${ws.name} ${label} ${col}`).toContain(col);
          } else {
            expect(typeof v, `${ws.name} ${label} ${col}`).toBe("number");
            expect(named).not.toContain(col);
          }
        });
        if (totalCol > 0) {
          const parts = values.slice(0, totalCol - 1);
          const total = values[totalCol - 1];
          if (typeof total === "number" && parts.every((v) => typeof v === "number")) {
            expect(
              (parts as number[]).reduce((a, b) => a + b, 0),
              `${ws.name} ${label}`,
            ).toBe(total);
            sumsChecked++;
          }
        }
      }
    }
    expect(hiddenSeen).toBeGreaterThan(0); // the paused Kitting pair is hidden somewhere
    expect(sumsChecked).toBeGreaterThan(0);
    expect(await xlsxText(await (await manager.request("/readiness/export.xlsx")).arrayBuffer())).not.toMatch(
      /hidden$/m,
    );
  });

  it("the API gives null with a reason code for every hidden figure and none for a shown one", async () => {
    const res = await manager.request("/api/v1/readiness?groupBy=department");
    const body = (await res.json()) as {
      reasonCodes: Record<string, string>;
      tables: Record<string, { cells: (number | null)[][]; reasons: { cells: (string | null)[][] } }>;
    };
    expect(Object.keys(body.reasonCodes).sort()).toEqual(["protected", "too-few-people"]);
    let hidden = 0;
    for (const [name, t] of Object.entries(body.tables)) {
      t.cells.forEach((line, i) => {
        line.forEach((v, j) => {
          const reason = t.reasons.cells[i][j];
          if (v === null) {
            hidden++;
            expect(body.reasonCodes, `${name} r${i} c${j}`).toHaveProperty(reason as string);
          } else expect(reason, `${name} r${i} c${j}`).toBeNull();
        });
      });
    }
    expect(hidden).toBeGreaterThan(0);
  });
});

describe("the payload scan itself", () => {
  it("finds the worker persona in her own page (control: the scan can see a leak)", async () => {
    const workers: WorkerRow[] = await testDb()("workers").select(
      "id",
      "given_name",
      "family_name",
      "email",
      "employee_number",
    );
    const { client } = await signIn(PERSONA.worker);
    const res = await client.request("/me.data");
    expect(res.status).toBe(200);
    const leaks = scanForPersonalData([["/me.data", await res.text()]], workers);
    expect(leaks.some((l) => l.includes("HV-00001") || l.includes("amara quist"))).toBe(true);
  });
});

describe("department and site views published together", () => {
  it("reveal no department count below the threshold, and the manager's rows are the same publication", async () => {
    const api = async (groupBy: string) => {
      const res = await fetch(`${baseUrl()}/api/v1/readiness?groupBy=${groupBy}`, {
        headers: { Authorization: `Bearer ${nyKey}` },
      });
      expect(res.status, groupBy).toBe(200);
      return (await res.json()) as { threshold: number; tables: { workersByStage: Table } };
    };
    type Table = {
      rows: string[];
      columns: string[];
      cells: (number | null)[][];
      rowTotals: (number | null)[];
      columnTotals: (number | null)[];
      grandTotal: number | null;
    };
    const dept = (await api("department")).tables.workersByStage;
    const site = (await api("site")).tables.workersByStage;
    expect(site.rows).toEqual(["North Yard"]);
    expect(dept.rows).toHaveLength(5);

    // True counts from the database, in the published order.
    const rows: { department: string; stage: string; n: number }[] = await testDb()("workers as w")
      .join("departments as d", "d.id", "w.department_id")
      .join("sites as s", "s.id", "w.site_id")
      .where("s.code", "NY")
      .select("d.name as department", "w.stage")
      .count({ n: "*" })
      .groupBy("d.name", "w.stage");
    const counts = dept.rows.map((label) =>
      STAGES.map((st) => Number(rows.find((r) => `North Yard · ${r.department}` === label && r.stage === st)?.n ?? 0)),
    );
    const small = counts.flat().filter((v) => v > 0 && v < THRESHOLD).length;
    expect(small).toBeGreaterThan(0); // the two paused Kitting workers at least

    // Every shown department number is the truth and not a small count.
    dept.cells.forEach((line, i) => {
      line.forEach((v, j) => {
        if (v !== null) {
          expect(v).toBe(counts[i][j]);
          expect(v === 0 || v >= THRESHOLD).toBe(true);
        }
      });
    });
    const published = {
      detail: { ...dept, rows: dept.rows, threshold: THRESHOLD },
      parent: { ...site, threshold: THRESHOLD },
      threshold: THRESHOLD,
    };
    const intervals = auditLinkedTables(
      { detail: { rows: dept.rows, columns: dept.columns, counts }, parentOf: dept.rows.map(() => "North Yard") },
      published,
    );
    expect(intervals.length).toBeGreaterThan(0);
    for (const iv of intervals) {
      // Not recoverable: the LP attacker's interval for every hidden number is at least 1 wide.
      expect(iv.max - iv.min, `${iv.kind} ${iv.table} r${iv.row} c${iv.column}`).toBeGreaterThanOrEqual(1);
    }
    // The department manager's page shows the same numbers for their rows (one organisation-wide publication).
    const mine = (await (await manager.request("/api/v1/readiness?groupBy=department")).json()) as {
      tables: { workersByStage: Table };
    };
    for (const [i, label] of mine.tables.workersByStage.rows.entries()) {
      const k = dept.rows.indexOf(label);
      expect(k, label).toBeGreaterThanOrEqual(0);
      expect(mine.tables.workersByStage.cells[i]).toEqual(dept.cells[k]);
      expect(mine.tables.workersByStage.rowTotals[i]).toEqual(dept.rowTotals[k]);
    }
  });
});

describe("manager API keys", () => {
  it("reach only readiness, me, sites and health among every /api/v1 route", async () => {
    const api = flattenRoutes(routes as unknown as RouteEntry[]).filter((r) => r.api);
    expect(api.map((r) => r.path)).toContain("/api/v1/readiness");
    const allowed = new Set(["/api/v1/readiness", "/api/v1/me", "/api/v1/sites", "/api/v1/health"]);
    const wrong: string[] = [];
    for (const r of api) {
      const path = concretePath(r.path) + (r.path === "/api/v1/readiness" ? "?groupBy=department" : "");
      const res = await fetch(`${baseUrl()}${path}`, { headers: { Authorization: `Bearer ${nyKey}` } });
      const expected = allowed.has(r.path) ? 200 : 403;
      if (res.status !== expected) wrong.push(`${r.path}: ${res.status}, expected ${expected}`);
    }
    expect(api.length).toBeGreaterThan(3);
    expect(wrong).toEqual([]);
  });

  it("refuse unknown groupings and any extra query parameter, naming the field", async () => {
    const get = (q: string) =>
      fetch(`${baseUrl()}/api/v1/readiness${q}`, { headers: { Authorization: `Bearer ${nyKey}` } });
    const bad = await get("?groupBy=worker");
    expect(bad.status).toBe(400);
    expect((await bad.json()).error).toMatch(/^groupBy:/);
    const extra = await get("?groupBy=stage&department=3");
    expect(extra.status).toBe(400);
    expect((await extra.json()).error).toMatch(/department/);
    const none = await get("");
    expect(none.status).toBe(400);
  });
});

describe("the board is kept until the data under it changes", () => {
  const publications = async () => Number((await testDb()("readiness_publications").count({ n: "*" }))[0].n);
  const board = async () => (await manager.request("/api/v1/readiness?groupBy=department")).json();

  it("every table the board counts still has its triggers after all migrations", async () => {
    // A later migration that rebuilds a table (SQLite copies it for some changes) would drop them silently.
    const k = testDb();
    const tables: string[] =
      process.env.LIMBERLY_TEST_DB === "postgres"
        ? (
            await k.raw(
              "select distinct event_object_table as t from information_schema.triggers where trigger_name = 'readiness_bump'",
            )
          ).rows.map((r: { t: string }) => r.t)
        : (
            await k.raw(
              "select tbl_name as t, count(*) as n from sqlite_master where type = 'trigger' and name like 'readiness_bump_%' group by tbl_name having count(*) = 3",
            )
          ).map((r: { t: string }) => r.t);
    expect([...tables].sort()).toEqual(Object.keys(READINESS_SOURCES).sort());
  });

  it("only a committed write moves the readiness generation, once per transaction", async () => {
    const before = await readinessGenerationNow();
    const w = await testDb()("workers").whereNot("stage", "withdrawn").orderBy("id").first("id", "stage");
    await expect(
      testDb().transaction(async (trx) => {
        await trx("workers").where({ id: w.id }).update({ stage: "paused" });
        throw new Error("rolled back on purpose");
      }),
    ).rejects.toThrow("rolled back on purpose");
    expect(await readinessGenerationNow()).toBe(before);
    // A write the board does not count (the row's updated_at) leaves it too.
    await testDb()("workers").where({ id: w.id }).update({ updated_at: new Date().toISOString() });
    expect(await readinessGenerationNow()).toBe(before);
    await testDb().transaction(async (trx) => {
      await trx("workers").where({ id: w.id }).update({ stage: "paused" });
      await trx("workers").where({ id: w.id }).update({ stage: w.stage });
    });
    const after = await readinessGenerationNow();
    expect(after).toBeGreaterThan(before);
    // PostgreSQL bumps once at commit (a deferred trigger); SQLite once per row written.
    if (process.env.LIMBERLY_TEST_DB === "postgres") expect(after).toBe(before + 1);
  });

  it("no write: the same stored publication again; a stage change through the app: new figures on the next request", async () => {
    await readinessSettled((p) => manager.request(p));
    const generation = await readinessGenerationNow();
    const rows = await publications();
    const first = await board();
    const again = await board();
    expect(again).toEqual(first);
    expect(await publications()).toBe(rows);
    expect(await readinessGenerationNow()).toBe(generation);

    // Assessment consent through the assessor's page moves an invited worker to "consented".
    const { client: assessor } = await signIn(PERSONA.assessor);
    await freshConsentedWorker(assessor);
    expect(await readinessGenerationNow()).toBeGreaterThan(generation);
    // The very next request knows: it serves the earlier (protected) figures marked as being updated…
    const next = await board();
    expect(next.notes.stage).toMatch(/being protected/);
    expect(next.tables.workersByStage.cells).toEqual(first.tables.workersByStage.cells);
    // …until the new publication, protected off the request thread, is stored.
    await readinessSettled((p) => manager.request(p));
    const settled = await board();
    expect(settled.notes.stage).toBeUndefined();
    // Every shown figure of the new publication is today's truth (the consented worker counted).
    const truth: { department: string; site: string; stage: string; n: number }[] = await testDb()("workers as w")
      .join("departments as d", "d.id", "w.department_id")
      .join("sites as s", "s.id", "w.site_id")
      .select("d.name as department", "s.name as site", "w.stage")
      .count({ n: "*" })
      .groupBy("d.name", "s.name", "w.stage");
    const t = settled.tables.workersByStage;
    // Single stages or the coarser bands, whichever the grouping rule chose.
    const bands = t.columns.length === STAGE_BANDS.length;
    expect(t.columns.length).toBe(bands ? STAGE_BANDS.length : STAGES.length);
    for (const [i, label] of (t.rows as string[]).entries())
      for (const j of t.columns.keys()) {
        const v = t.cells[i][j];
        const n = truth
          .filter((r) => `${r.site} · ${r.department}` === label)
          .filter((r) => (bands ? STAGE_BAND_OF[r.stage as Stage] === STAGE_BANDS[j] : r.stage === STAGES[j]))
          .reduce((a, r) => a + Number(r.n), 0);
        if (v !== null) expect(v).toBe(n);
      }
    const totals = truth.filter((r) => t.rows.includes(`${r.site} · ${r.department}`));
    if (t.grandTotal !== null) expect(t.grandTotal).toBe(totals.reduce((a, r) => a + Number(r.n), 0));
  });
});

describe("organisation settings", () => {
  it("admin may set the threshold (never below 5) and the groupings; managers then see them", async () => {
    const { client: admin } = await signIn(PERSONA.admin);
    const page = await admin.request("/admin/organisation");
    expect(page.status).toBe(200);
    expect(await manager.request("/admin/organisation").then((r) => r.status)).toBe(403);

    const low = await admin.postForm("/admin/organisation", {
      disclosureThreshold: "3",
      maxHiddenSharePercent: "25",
      groupings: ["site", "department", "stage"],
    });
    expect(low.status).toBe(400);
    expect(await low.text()).toContain("at least 5");
    const noRows = await admin.postForm("/admin/organisation", {
      disclosureThreshold: "6",
      maxHiddenSharePercent: "25",
      groupings: ["stage"],
    });
    expect(noRows.status).toBe(400);
    expect(await noRows.text()).toContain("site or department");

    for (const [share, message] of [
      ["4", "at least 5 %"],
      ["61", "at most 60 %"],
      ["", "whole number of per cent"],
      ["12.5", "whole number of per cent"],
    ]) {
      const refused = await admin.postForm("/admin/organisation", {
        disclosureThreshold: "5",
        maxHiddenSharePercent: share,
        groupings: ["department", "stage"],
      });
      expect(refused.status, share).toBe(400);
      expect(await refused.text()).toContain(message);
    }
    expect((await testDb()("organisations").first("max_hidden_share")).max_hidden_share).toBe(0.25);
    const ok = await admin.postForm("/admin/organisation", {
      disclosureThreshold: "8",
      maxHiddenSharePercent: "40",
      groupings: ["department", "stage"],
    });
    expect(ok.status).toBe(200);
    try {
      const org = await testDb()("organisations").first(
        "disclosure_threshold",
        "manager_groupings",
        "max_hidden_share",
      );
      expect(org.disclosure_threshold).toBe(8);
      expect(org.max_hidden_share).toBe(0.4);
      expect(JSON.parse(org.manager_groupings)).toEqual(["department", "stage"]);
      const stage = await (await manager.request("/api/v1/readiness?groupBy=department")).json();
      expect(stage.threshold).toBe(8);
      for (const line of stage.tables.workersByStage.cells as (number | null)[][])
        for (const v of line) if (v !== null) expect(v === 0 || v >= 8).toBe(true);
      expect(stage.tables.readyByDeviceType).toBeUndefined();
      expect((await manager.request("/api/v1/readiness?groupBy=site")).status).toBe(403);
      expect((await manager.request("/api/v1/readiness?groupBy=deviceType")).status).toBe(403);
    } finally {
      const back = await admin.postForm("/admin/organisation", {
        disclosureThreshold: "5",
        maxHiddenSharePercent: "25",
        groupings: ["site", "department", "deviceType", "stage", "week"],
      });
      expect(back.status).toBe(200);
    }
  });
});

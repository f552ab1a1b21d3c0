import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLinked, type LinkedInterval } from "~/compute/disclosure";
import type { PublishedPair, TableCounts } from "~/compute/disclosure-history";
import type { ReadinessBoard } from "~/models/readiness.server";
import { highsTwoTimesBounds } from "../reference/disclosure-audit";
import { testDb, useStackDatabaseInProcess } from "./helpers";

// Readiness publications over time on the demo organisation: unchanged counts give the stored
// publication again (no new row); a change is protected against the latest earlier publication and the
// pair is audited by the product (auditLinked, department and site tables of both times) and, for the
// department tables, by HiGHS (tests/reference/disclosure-audit.ts) — a reader weaker than the full one,
// so any leak it finds is real. The grouping rule (docs/consent-and-disclosure.md) holds on the demo board.

const everywhere = { allSites: true, siteIds: [], departmentIds: [] };
const viewer = { kind: "user" as const, id: 990_101 };
let readinessBoard: (s: typeof everywhere, v?: typeof viewer) => Promise<ReadinessBoard>;
let readinessRefreshesSettled: () => Promise<void>;
let changed: { id: number; status: string } | null = null;

beforeAll(async () => {
  useStackDatabaseInProcess();
  ({ readinessBoard, readinessRefreshesSettled } = await import("~/models/readiness.server"));
  // Start from the figures of today's data (earlier files wrote; their changes are protected in the background).
  await readinessBoard(everywhere);
  await readinessRefreshesSettled();
});

afterAll(async () => {
  if (changed) await testDb()("device_courses").where({ id: changed.id }).update({ status: changed.status });
});

const rowCount = async (key: string) =>
  Number((await testDb()("readiness_publications").where({ table_key: key }).count({ n: "*" }))[0].n);

function leaky(b: LinkedInterval) {
  if (b.quantity === "change") return !(b.min <= 1e-6 && b.max >= -1e-6);
  const whole = b.max === Infinity ? Infinity : Math.floor(b.max + 1e-6) - Math.ceil(b.min - 1e-6) + 1;
  return whole < 2 || (b.value < 5 && b.max < 5 - 1e-6);
}

describe("readiness publications over time", () => {
  it("unchanged counts: the same publication, no new row, one receipt per viewer", async () => {
    const first = await readinessBoard(everywhere, viewer);
    const rows = await rowCount("stage");
    expect(rows).toBeGreaterThan(0);
    const again = await readinessBoard(everywhere, viewer);
    expect(await rowCount("stage")).toBe(rows);
    expect(again.stage).toEqual(first.stage);
    expect(again.ready).toEqual(first.ready);
    if (first.stage.status !== "ok") throw new Error(`stage panel: ${JSON.stringify(first.stage)}`);
    const receipts = await testDb()("readiness_receipts").where({
      publication_id: first.stage.grouping.publicationId,
      viewer_kind: "user",
      viewer_id: viewer.id,
    });
    expect(receipts).toHaveLength(1);
  });

  it("the demo board hides at most 25 % of a table, or says which coarser grouping it used and why", async () => {
    const board = await readinessBoard(everywhere, viewer);
    for (const panel of [board.stage, board.ready]) {
      if (panel.status === "off") throw new Error("the demo organisation shows stage and device tables");
      if (panel.status !== "ok") {
        expect(panel.reason.length).toBeGreaterThan(10);
        continue;
      }
      const g = panel.grouping;
      if (g.hiddenShare > 0.25) expect(g.reason).toMatch(/hidden|hide/);
      if (panel === board.stage && g.key !== "stages") expect(g.reason).toMatch(/Single stages would hide \d+ %/);
      // Never an empty frame: some cell of the table shows.
      expect(panel.department?.cells.flat().some((v) => v !== null)).toBe(true);
    }
  });

  it("one person's change is protected against last publication: the pair reveals nothing (product and HiGHS)", async () => {
    // Start the ready table's history from today's data: earlier files change courses and publish, and a
    // history from their data could make this table withheld (which another test covers).
    const earlier = testDb()("readiness_publications").where({ table_key: "ready" }).select("id");
    await testDb()("readiness_receipts").whereIn("publication_id", earlier).delete();
    await testDb()("readiness_publications").where({ table_key: "ready" }).update({ linked_to: null });
    await testDb()("readiness_publications").where({ table_key: "ready" }).delete();
    // Publications removed behind the app's back: tell the cached boards.
    await testDb()("readiness_generation").where({ id: 1 }).increment("value", 1);
    await readinessBoard(everywhere, viewer);
    const before = await testDb()("readiness_publications").where({ table_key: "ready" }).orderBy("id", "desc").first();
    // A proficient course in a big group (≥ 7) becomes "training": one cell goes down by one.
    const big = (await testDb()("device_courses as dc")
      .join("workers as w", "w.id", "dc.worker_id")
      .where("dc.status", "proficient")
      .whereNot("w.stage", "withdrawn")
      .groupBy("w.department_id", "dc.device_type_id")
      .havingRaw("count(*) >= 7")
      .select("w.department_id as dept", "dc.device_type_id as device")) as { dept: number; device: number }[];
    expect(big.length).toBeGreaterThan(0);
    const course = await testDb()("device_courses as dc")
      .join("workers as w", "w.id", "dc.worker_id")
      .where({ "w.department_id": big[0].dept, "dc.device_type_id": big[0].device, "dc.status": "proficient" })
      .first("dc.id", "dc.status");
    changed = { id: course.id, status: course.status };
    await testDb()("device_courses").where({ id: course.id }).update({ status: "training" });
    // The next request serves the earlier publication, marked, while the new one is protected off-thread.
    const meanwhile = await readinessBoard(everywhere, viewer);
    if (meanwhile.ready.status !== "ok") throw new Error(`ready panel: ${JSON.stringify(meanwhile.ready)}`);
    expect(meanwhile.ready.grouping.publicationId).toBe(before.id);
    expect(meanwhile.ready.grouping.updating).toMatch(/being protected/);
    await readinessRefreshesSettled();
    const board = await readinessBoard(everywhere, viewer);
    if (board.ready.status === "ok") expect(board.ready.grouping.updating).toBeNull();
    const after = await testDb()("readiness_publications").where({ table_key: "ready" }).orderBy("id", "desc").first();
    expect(after.id).toBeGreaterThan(before.id);
    const c0: TableCounts = JSON.parse(before.counts);
    const c1: TableCounts = JSON.parse(after.counts);
    // Counts only: labels and numbers, nothing about a person.
    expect(Object.keys(c1).sort()).toEqual(["columns", "counts", "parentOf", "rows", "threshold"]);
    if (board.ready.status === "empty") {
      expect(board.ready.reason).toMatch(/small groups/);
      return;
    }
    if (board.ready.status !== "ok") throw new Error("the device table is switched on");
    expect(board.ready.grouping.publicationId).toBe(after.id);
    expect(after.linked_to).toBe(before.id);
    const p0: PublishedPair = JSON.parse(before.published);
    const p1: PublishedPair = JSON.parse(after.published);
    const sites = [...new Set(c0.parentOf)];
    const parentOf = c0.parentOf.map((s) => sites.indexOf(s));
    const siteCounts = (c: TableCounts) =>
      sites.map((_, q) => c.columns.map((_, j) => c.counts.reduce((s, l, i) => s + (parentOf[i] === q ? l[j] : 0), 0)));
    const form = (t: PublishedPair["detail"]) => ({
      cells: t.cells,
      rowTotals: t.rowTotals,
      columnTotals: t.columnTotals,
      grandTotal: t.grandTotal,
    });
    const product = auditLinked(
      [
        { rows: c0.rows, columns: c0.columns, counts: c0.counts, published: form(p0.detail) },
        { rows: sites, columns: c0.columns, counts: siteCounts(c0), published: form(p0.parent) },
        { rows: c1.rows, columns: c1.columns, counts: c1.counts, published: form(p1.detail) },
        { rows: sites, columns: c1.columns, counts: siteCounts(c1), published: form(p1.parent) },
      ],
      [
        { kind: "rollup", detail: 0, parent: 1, parentOf },
        { kind: "rollup", detail: 2, parent: 3, parentOf },
        { kind: "change", before: 0, after: 2, maxCellChange: 1 },
      ],
    );
    expect(product.filter(leaky)).toEqual([]);
    const highs = await highsTwoTimesBounds(form(p0.detail), form(p1.detail), 1);
    const truthOf = (name: string) => {
      const [head, ...idx] = name.split("_");
      const c = head.startsWith("b") ? c0.counts : c1.counts;
      const at = idx.map(Number);
      if (head === "dc") return null;
      if (head.endsWith("c")) return c[at[0]][at[1]];
      if (head.endsWith("r")) return c[at[0]].reduce((a, b) => a + b, 0);
      if (head.endsWith("k")) return c.reduce((a, l) => a + l[at[0]], 0);
      return c.flat().reduce((a, b) => a + b, 0);
    };
    const highsLeaks = highs.filter((b) => {
      const value = truthOf(b.name);
      if (value === null) return !(b.min <= 1e-6 && b.max >= -1e-6);
      const whole = b.max === Infinity ? Infinity : Math.floor(b.max + 1e-6) - Math.ceil(b.min - 1e-6) + 1;
      return whole < 2 || (value < 5 && b.max < 5 - 1e-6);
    });
    expect(highsLeaks).toEqual([]);
  });
});

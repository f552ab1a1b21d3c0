import { afterAll, describe, expect, inject, it } from "vitest";
import type { Scope } from "~/auth/scope";
import { testDb, useStackDatabaseInProcess } from "./helpers";

// Paged lists sort on the chosen column, then on the table's id: with many rows sharing one sort value (the
// department), walking the pages shows every worker exactly once, in one order on both engines.
const everywhere: Scope = { allSites: true, siteIds: [], departmentIds: [] };

describe("paged lists", () => {
  it("never repeat or skip a row between pages when the sort column has ties", async () => {
    useStackDatabaseInProcess();
    const { listWorkers } = await import("~/models/roster.server");
    const total = Number((await testDb()("workers").count({ n: "*" }).first())!.n);
    for (const dir of ["asc", "desc"] as const) {
      const seen: { id: number; key: string }[] = [];
      for (let page = 1; ; page++) {
        const p = await listWorkers(everywhere, { sort: "department", dir, page, size: 25 }, {});
        expect(p.total).toBe(total);
        seen.push(...p.rows.map((r) => ({ id: r.id, key: r.department })));
        if (page * 25 >= p.total) break;
      }
      expect(seen.length).toBe(total);
      expect(new Set(seen.map((r) => r.id)).size).toBe(total);
      // Ties are broken by id, in the same direction as the sort.
      for (let i = 1; i < seen.length; i++) {
        if (seen[i].key !== seen[i - 1].key) continue;
        if (dir === "asc") expect(seen[i].id).toBeGreaterThan(seen[i - 1].id);
        else expect(seen[i].id).toBeLessThan(seen[i - 1].id);
      }
      expect(new Set(seen.map((r) => r.key)).size).toBeLessThan(total / 10); // there are ties to break
    }
  });
});

afterAll(async () => {
  if (process.env.DATABASE_URL !== inject("databaseUrl")) return;
  const { db } = await import("~/db.server");
  await db()
    .destroy()
    .catch(() => undefined);
});

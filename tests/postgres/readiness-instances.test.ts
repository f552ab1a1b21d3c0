import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browserless } from "../integration/helpers";
import { PERSONA, readinessSettled } from "../integration/helpers";
import { type Cluster, signInAt, startCluster } from "./cluster";

// Two app instances on one PostgreSQL database: each keeps its own cached readiness boards, keyed on the
// readiness generation stored in the database, so a write made through one instance changes the board the
// other one serves on its very next request, and both end on the same stored publication.
describe("the readiness board across app instances", () => {
  let c: Cluster;
  let managerA: Browserless;
  let managerB: Browserless;
  let assessorA: Browserless;
  beforeAll(async () => {
    c = await startCluster(2);
    managerA = await signInAt(c.apps[0].appUrl, PERSONA.manager);
    managerB = await signInAt(c.apps[1].appUrl, PERSONA.manager);
    assessorA = await signInAt(c.apps[0].appUrl, PERSONA.assessor);
  }, 300_000);
  afterAll(async () => {
    await c?.stop();
  });

  const board = async (m: Browserless) => (await m.request("/api/v1/readiness?groupBy=department")).json();
  const generation = async () => Number((await c.db("readiness_generation").where({ id: 1 }).first("value")).value);

  it("a consent recorded on instance A shows on instance B's next request; both then serve one publication", async () => {
    await readinessSettled((p) => managerA.request(p));
    await readinessSettled((p) => managerB.request(p));
    const before = await board(managerB);
    expect(await board(managerA)).toEqual(before);
    const g0 = await generation();

    const w = await c
      .db("workers")
      .where({ stage: "invited" })
      .whereNotExists(c.db("consent_records").whereRaw("consent_records.worker_id = workers.id"))
      .orderBy("id", "desc")
      .first("id");
    const me = await c.db("users").where({ email: PERSONA.assessor }).first("id");
    const res = await assessorA.postForm(`/assess/workers/${w.id}`, {
      intent: "consent",
      purposes: ["assessment"],
      witnessUserId: String(me.id),
      confirmRead: "on",
    });
    expect(res.status).toBe(200);
    // Bumped once, in the consent's own transaction.
    expect(await generation()).toBe(g0 + 1);
    expect((await c.db("workers").where({ id: w.id }).first("stage")).stage).toBe("consented");

    const next = await board(managerB);
    expect(next.notes.stage).toMatch(/being protected/);
    await readinessSettled((p) => managerB.request(p));
    await readinessSettled((p) => managerA.request(p));
    const onB = await board(managerB);
    const onA = await board(managerA);
    expect(onA).toEqual(onB);
    expect(onB.notes.stage).toBeUndefined();
    // The invited count of the worker's department went down by one, where the new publication shows it.
    const dept = await c
      .db("workers as w")
      .join("departments as d", "d.id", "w.department_id")
      .join("sites as s", "s.id", "w.site_id")
      .where("w.id", w.id)
      .first("d.name as department", "s.name as site");
    const row = onB.tables.workersByStage.rows.indexOf(`${dept.site} · ${dept.department}`);
    const invited = await c
      .db("workers")
      .where({ stage: "invited", department_id: c.db("workers").where({ id: w.id }).select("department_id") })
      .count({ n: "*" })
      .first();
    const shown = row >= 0 ? onB.tables.workersByStage.cells[row][0] : null;
    if (shown !== null && onB.tables.workersByStage.columns[0] === "Invited") expect(shown).toBe(Number(invited?.n));
  });
});

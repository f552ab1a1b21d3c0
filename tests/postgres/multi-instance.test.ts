import PgBoss from "pg-boss";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browserless } from "../integration/helpers";
import { PERSONA } from "../integration/helpers";
import { type Cluster, signInAt, startCluster, waitFor } from "./cluster";

// Two app processes (the built server) on one PostgreSQL database, jobs on pg-boss. A run started on one
// instance is polled on the other; SIGKILL on the instance solving a run makes the other instance take it
// over once its heartbeat is stale, and finish it — never stuck in "running", never solved twice (the claim
// counter `attempts` says how many times an instance started solving it).
const HEARTBEAT_MS = 250;
/** With the grown pool (growPool, planning at the 90th percentile), a solve of several seconds on the test machine. */
const BIG = {
  startDate: "2026-12-07",
  horizonWeeks: "26",
  fairnessShare: "30",
  includeProficientElsewhere: "on",
};
const STALE_MS = 2_000;

interface RunDbRow {
  id: number;
  status: string;
  phase: string | null;
  fraction: number;
  error: string | null;
  claimed_by: string | null;
  attempts: number;
  result: string | null;
}

/**
 * Makes the demo's planning pool bigger (so a solve takes long enough to be killed half-way): each worker
 * with a forecast gets `copies` invented twins with the same site, department, consent and forecasts.
 */
async function growPool(db: Cluster["db"], copies: number): Promise<void> {
  if (await db("workers").where("employee_number", "like", "%-T1").first("id")) return; // grown already
  await db.transaction(async (trx) => {
    await trx.raw(
      `INSERT INTO workers (employee_number, given_name, family_name, site_id, department_id, stage, created_at, updated_at)
       SELECT w.employee_number || '-T' || g, w.given_name, w.family_name, w.site_id, w.department_id, w.stage, w.created_at, w.updated_at
       FROM workers w CROSS JOIN generate_series(1, ?) g
       WHERE w.id IN (SELECT worker_id FROM forecasts)`,
      [copies],
    );
    const twin =
      "JOIN workers o ON o.id = x.worker_id JOIN workers n ON n.employee_number LIKE o.employee_number || '-T%'";
    for (const table of ["consent_records", "forecasts"]) {
      const cols = Object.keys(await trx(table).columnInfo()).filter((col) => col !== "id" && col !== "worker_id");
      const list = cols.map((col) => `"${col}"`).join(", ");
      const from = cols.map((col) => `x."${col}"`).join(", ");
      await trx.raw(`INSERT INTO ${table} (worker_id, ${list}) SELECT n.id, ${from} FROM ${table} x ${twin}`);
    }
    // Runs plan at the organisation's planning quantile; the 90th percentile needs more hours: a longer solve.
    await trx("organisations").update({ planning_quantile: 0.9 });
  });
}

describe("several app instances on one PostgreSQL database", () => {
  let c: Cluster;
  const clients: Browserless[] = [];
  const run = (id: number) => c.db<RunDbRow>("allocation_runs").where({ id }).first();
  const pidOf = (claimedBy: string | null) => Number(claimedBy?.split(":")[1]);

  beforeAll(async () => {
    c = await startCluster(2, {
      LIMBERLY_JOB_HEARTBEAT_MS: String(HEARTBEAT_MS),
      LIMBERLY_JOB_STALE_MS: String(STALE_MS),
    });
    for (const app of c.apps) clients.push(await signInAt(app.appUrl, PERSONA.coordinator));
  }, 300_000);
  afterAll(async () => {
    await c?.stop();
  });

  async function startRunAt(client: Browserless, fields: Record<string, string>): Promise<number> {
    const res = await client.postForm("/coordinate/runs", fields);
    expect(res.status, (await res.clone().text()).slice(0, 300)).toBe(302);
    return Number(/\/coordinate\/runs\/(\d+)$/.exec(res.headers.get("Location") ?? "")?.[1]);
  }
  async function statusAt(client: Browserless, id: number) {
    const res = await client.request(`/coordinate/runs/${id}/status`);
    expect(res.status).toBe(200);
    return (await res.json()) as { status: string; phase: string; fraction: number; error: string | null };
  }

  it("solves every queued run exactly once, whichever instance takes it", async () => {
    const small = { startDate: "2026-12-07", horizonWeeks: "4", fairnessShare: "20" };
    // Four runs started at once, two on each instance: both instances' workers compete for the jobs.
    const ids = await Promise.all([0, 1, 0, 1].map((i, n) => startRunAt(clients[i], { ...small, label: `race ${n}` })));
    expect(new Set(ids).size).toBe(4);
    for (const id of ids) {
      const s = await waitFor(`run ${id} to finish`, async () => {
        const r = await statusAt(clients[1 - (id % 2)], id);
        return r.status === "done" || r.status === "failed" ? r : null;
      });
      expect(s.status).toBe("done");
      expect(s.error).toBeNull();
      const row = (await run(id))!;
      expect(row.attempts, `run ${id} was claimed once`).toBe(1);
      expect(c.apps.map((a) => a.child.pid)).toContain(pidOf(row.claimed_by));
      expect(JSON.parse(row.result!).assignments.length).toBeGreaterThan(0);
    }
  });

  it("finishes a run on the other instance when the solving instance is killed mid-solve", async () => {
    await growPool(c.db, 2);
    const id = await startRunAt(clients[0], { ...BIG, label: "killed mid-solve" });
    // Wait until an instance is solving it (claimed, progress written by the solver).
    const solving = await waitFor("the run to be mid-solve", async () => {
      const r = await run(id);
      return r?.status === "running" && r.claimed_by && r.phase !== "starting" ? r : null;
    });
    const victim = c.apps.find((a) => a.child.pid === pidOf(solving.claimed_by))!;
    const survivorIndex = c.apps.indexOf(victim) === 0 ? 1 : 0;
    const survivor = c.apps[survivorIndex];
    expect(victim).toBeDefined();
    // Progress is in the runs table, so the other instance reports it too.
    const seenElsewhere = await statusAt(clients[survivorIndex], id);
    expect(seenElsewhere.status).toBe("running");

    const exited = new Promise((r) => victim.child.once("exit", r));
    victim.child.kill("SIGKILL");
    await exited;

    // The survivor takes the run back once the heartbeat is stale and solves it again from the snapshot.
    const requeued = await waitFor(
      "the survivor to take the run over",
      async () => {
        const r = await run(id);
        return r && r.attempts >= 2 ? r : null;
      },
      60_000,
    );
    expect(pidOf(requeued.claimed_by)).toBe(survivor.child.pid);
    const final = await waitFor(
      "the run to finish on the survivor",
      async () => {
        const s = await statusAt(clients[survivorIndex], id);
        return s.status === "done" || s.status === "failed" ? s : null;
      },
      180_000,
    );
    expect(final.status).toBe("done");
    expect(final.error).toBeNull();
    const row = (await run(id))!;
    expect(row.attempts).toBe(2); // the killed attempt and the one that finished: never a third, never parallel
    expect(pidOf(row.claimed_by)).toBe(survivor.child.pid);
    expect(JSON.parse(row.result!).assignments.length).toBeGreaterThan(0);
  });

  it("schedules the retention purge once for the cluster, and an instance runs it from the queue", async () => {
    const schedules = await c.db("pgboss.schedule").where({ name: "retention-purge" }).select("cron", "timezone");
    expect(schedules).toEqual([{ cron: "15 3 * * *", timezone: "UTC" }]);
    // An assessment far older than the retention period (the organisation keeps 10 years by default).
    const w = await c.db("workers").orderBy("id").first("id");
    const [old] = await c
      .db("assessment_sessions")
      .insert({ worker_id: w.id, assessed_on: "2001-03-05", created_at: new Date().toISOString() })
      .returning("id");
    // Run the scheduled job now instead of waiting for 03:15: any instance's worker takes it.
    const boss = new PgBoss({ connectionString: c.pg.url, supervise: false, schedule: false, max: 2 });
    await boss.start();
    try {
      const jobId = await boss.send("retention-purge", {});
      expect(jobId).toBeTruthy();
      const job = await waitFor("the purge job to complete", async () => {
        const j = await boss.getJobById("retention-purge", jobId!, { includeArchive: true });
        return j && (j.state === "completed" || j.state === "failed") ? j : null;
      });
      expect(job.state).toBe("completed");
    } finally {
      await boss.stop({ graceful: false, close: true, wait: true });
    }
    expect(await c.db("assessment_sessions").where({ id: old.id }).first("id")).toBeUndefined();
  });

  it("gives its run back when stopped with SIGTERM, and a newly started instance finishes it", async () => {
    await growPool(c.db, 2);
    const live = c.apps.filter((a) => a.child.exitCode === null && a.child.signalCode === null);
    expect(live).toHaveLength(1); // the survivor of the previous test: nobody else can take the run
    const [only] = live;
    const client = await signInAt(only.appUrl, PERSONA.coordinator);
    const id = await startRunAt(client, { ...BIG, label: "stopped mid-solve" });
    await waitFor("the run to be mid-solve", async () => {
      const r = await run(id);
      return r?.status === "running" && r.phase !== "starting" ? r : null;
    });
    const exited = new Promise((r) => only.child.once("exit", r));
    await only.stop(); // SIGTERM (SIGKILL only if it does not end within the grace period)
    await exited;
    const released = (await run(id))!;
    expect([released.status, released.claimed_by, released.phase]).toEqual([
      "queued",
      null,
      "queued again (instance stopped)",
    ]);
    expect(released.attempts).toBe(1);
    // A new instance on the same database picks the queued run up from the queue and solves it.
    const fresh = await c.addApp();
    const freshClient = await signInAt(fresh.appUrl, PERSONA.coordinator);
    const final = await waitFor(
      "the run to finish on the new instance",
      async () => {
        const st = await statusAt(freshClient, id);
        return st.status === "done" || st.status === "failed" ? st : null;
      },
      180_000,
    );
    expect(final.status).toBe("done");
    const row = (await run(id))!;
    expect(row.attempts).toBe(2);
    expect(pidOf(row.claimed_by)).toBe(fresh.child.pid);
  });
});

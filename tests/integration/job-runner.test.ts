import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { AllocationPlan } from "../../app/compute/allocation";
import { AllocationRunner } from "../../app/jobs/runner.server";
import type { SolveFn } from "../../app/jobs/solve.server";
import {
  claimRun,
  heartbeat,
  markDone,
  markFailed,
  recoverStaleRuns,
  writeProgress,
} from "../../app/models/allocation-runs.server";
import { type TestDb, testKnex } from "./helpers";
import { migrationSource } from "./migration-source";

// The single-machine (SQLite) job runner's guarantees, on its own database file opened through two
// connections as two app processes would: a run is claimed once (one conditional update), only the claim's
// owner writes progress, result or failure, stale runs are recognised by heartbeat age only (a live run is
// never taken, also not by an instance that just started), and a taken-back run fails with a reason once it
// was claimed maxAttempts times.
const PLAN = {
  status: "optimal",
  objective: 0,
  bound: 0,
  assignments: [],
  unassigned: [],
} as unknown as AllocationPlan;

describe("job runner on SQLite", () => {
  let dir = "";
  let a: TestDb; // "instance A"
  let b: TestDb; // "instance B", a second connection to the same file
  beforeAll(async () => {
    dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-jobs-"));
    const file = path.join(dir, "jobs.sqlite");
    a = testKnex(file);
    b = testKnex(file);
    await a.migrate.latest({ migrationSource });
  });
  afterAll(async () => {
    await a?.destroy();
    await b?.destroy();
    fs.rmSync(dir, { recursive: true, force: true });
  });

  const newRun = async (): Promise<number> => {
    const [r] = await a("allocation_runs")
      .insert({
        parameters: JSON.stringify({ pool: { siteIds: [] } }),
        status: "queued",
        phase: "queued",
        fraction: 0,
        problem: JSON.stringify({ problem: { workers: [] }, calendar: { workers: [] }, notes: [], excluded: [] }),
        created_at: new Date().toISOString(),
        version: 1,
      })
      .returning("id");
    return r.id as number;
  };
  const row = (id: number) => a("allocation_runs").where({ id }).first();
  const age = (id: number, ms: number) =>
    a("allocation_runs")
      .where({ id })
      .update({ heartbeat_at: new Date(Date.now() - ms).toISOString() });
  const until = async (what: string, check: () => Promise<boolean>) => {
    const deadline = Date.now() + 20_000;
    while (!(await check())) {
      if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
      await new Promise((r) => setTimeout(r, 20));
    }
  };

  it("claims a queued run exactly once, also when two connections try at the same moment", async () => {
    const id = await newRun();
    const claims = await Promise.all([claimRun(id, "inst-a", a), claimRun(id, "inst-b", b)]);
    expect(claims.filter((c) => c !== null)).toHaveLength(1);
    const r = await row(id);
    expect(r.status).toBe("running");
    expect(r.attempts).toBe(1);
    expect(["inst-a", "inst-b"]).toContain(r.claimed_by);
    expect(r.heartbeat_at).not.toBeNull();
    expect(await claimRun(id, "inst-c", a)).toBeNull(); // running: not claimable
  });

  it("lets only the owner write progress, the result or a failure", async () => {
    const id = await newRun();
    expect(await claimRun(id, "owner", a)).not.toBeNull();
    expect(await heartbeat(id, "other", b)).toBe(false);
    expect(await writeProgress(id, "other", "bogus", 0.9, b)).toBe(false);
    expect(await markFailed(id, "other", "not mine", b)).toBe(false);
    expect(await markDone(id, "other", PLAN, b)).toBe(false);
    let r = await row(id);
    expect([r.status, r.phase, r.error, r.result]).toEqual(["running", "starting", null, null]);
    expect(await writeProgress(id, "owner", "solving", 0.5, a)).toBe(true);
    expect(await markDone(id, "owner", PLAN, a)).toBe(true);
    r = await row(id);
    expect([r.status, r.fraction, r.error]).toEqual(["done", 1, null]);
    // A finished run is not anyone's to change any more.
    expect(await markFailed(id, "owner", "late failure", a)).toBe(false);
    expect((await row(id)).error).toBeNull();
  });

  it("takes back runs by heartbeat age only, and fails them with the reason after the last attempt", async () => {
    const live = await newRun();
    const stale = await newRun();
    await claimRun(live, "alive", a);
    await claimRun(stale, "dead", a);
    await age(stale, 120_000);
    // An instance that has just started sweeps at once: only the run without a recent heartbeat moves.
    const first = await recoverStaleRuns({ staleMs: 60_000, maxAttempts: 2 }, b);
    expect(first.requeued).toContain(stale);
    expect(first.requeued).not.toContain(live);
    expect(first.failed).toEqual([]);
    expect((await row(live)).status).toBe("running");
    expect((await row(live)).claimed_by).toBe("alive");
    const back = await row(stale);
    expect([back.status, back.claimed_by, back.error]).toEqual(["queued", null, null]);
    // The instance that lost it cannot finish it any more.
    expect(await markDone(stale, "dead", PLAN, a)).toBe(false);
    // Second attempt, also abandoned: now it fails, saying why.
    expect(await claimRun(stale, "dead-again", b)).not.toBeNull();
    await age(stale, 120_000);
    const second = await recoverStaleRuns({ staleMs: 60_000, maxAttempts: 2 }, a);
    expect(second.failed).toEqual([stale]);
    const failed = await row(stale);
    expect(failed.status).toBe("failed");
    expect(failed.error).toMatch(/dead-again.*stopped answering, after 2 attempt/);
    expect(failed.attempts).toBe(2);
    // Two sweeps at once change a stale run once.
    const third = await newRun();
    await claimRun(third, "gone", a);
    await age(third, 120_000);
    const both = await Promise.all([
      recoverStaleRuns({ staleMs: 60_000, maxAttempts: 2 }, a),
      recoverStaleRuns({ staleMs: 60_000, maxAttempts: 2 }, b),
    ]);
    expect(both.flatMap((x) => x.requeued).filter((x) => x === third)).toHaveLength(1);
  });

  it("beats while solving, writes the result, and stops without writing when its run is taken back", async () => {
    const id = await newRun();
    // A solve that finishes only after the runner's heartbeat has advanced at least twice.
    const beats: string[] = [];
    const patient: SolveFn = async () => {
      await until("two heartbeats", async () => {
        const hb = String((await row(id)).heartbeat_at);
        if (beats.at(-1) !== hb) beats.push(hb);
        return beats.length >= 3;
      });
      return PLAN;
    };
    const runner = new AllocationRunner({
      instanceId: "runner-a",
      heartbeatMs: 30,
      staleMs: 1_000,
      maxAttempts: 2,
      solve: patient,
      k: a,
    });
    expect(await runner.process(id)).toBe("solved");
    expect((await row(id)).status).toBe("done");
    expect(await runner.process(id)).toBe("not-queued");

    // A solve that runs until it is told to stop; meanwhile its run is declared stale and claimed elsewhere.
    const other = await newRun();
    const endless: SolveFn = (_p, _progress, signal) =>
      new Promise((_resolve, reject) => signal.addEventListener("abort", () => reject(new Error("aborted"))));
    const slow = new AllocationRunner({
      instanceId: "runner-slow",
      heartbeatMs: 30,
      staleMs: 1_000,
      maxAttempts: 3,
      solve: endless,
      k: a,
    });
    const outcome = slow.process(other);
    await until("the slow runner to claim", async () => (await row(other)).claimed_by === "runner-slow");
    // Pretend it went quiet: the heartbeat is old, a sweep requeues, a second instance claims.
    await age(other, 60_000);
    await recoverStaleRuns({ staleMs: 1_000, maxAttempts: 3 }, b);
    expect(await claimRun(other, "runner-b", b)).not.toBeNull();
    expect(await outcome).toBe("lost");
    const r = await row(other);
    expect([r.status, r.claimed_by, r.error, r.attempts]).toEqual(["running", "runner-b", null, 2]);
  });

  it("drains queued runs oldest first and gives its run back when stopped", async () => {
    await a("allocation_runs").whereIn("status", ["queued", "running"]).update({ status: "failed" });
    const first = await newRun();
    const second = await newRun();
    const order: number[] = [];
    const runner = new AllocationRunner({
      instanceId: "drainer",
      heartbeatMs: 30,
      staleMs: 1_000,
      maxAttempts: 2,
      solve: async () => {
        // Which run is being solved right now, read from the table.
        const running = await a("allocation_runs").where({ status: "running", claimed_by: "drainer" }).pluck("id");
        order.push(...running);
        return PLAN;
      },
      k: a,
    });
    await runner.drain();
    expect(order).toEqual([first, second]);
    expect((await row(first)).status).toBe("done");
    expect((await row(second)).status).toBe("done");

    const held = await newRun();
    const stopping = new AllocationRunner({
      instanceId: "stopping",
      heartbeatMs: 30,
      staleMs: 1_000,
      maxAttempts: 2,
      solve: (_p, _progress, signal) =>
        new Promise((_resolve, reject) => signal.addEventListener("abort", () => reject(new Error("stopped")))),
      k: a,
    });
    const outcome = stopping.process(held);
    await until("the claim", async () => (await row(held)).status === "running");
    await stopping.stop();
    expect(await outcome).toBe("released");
    const r = await row(held);
    expect([r.status, r.claimed_by, r.error]).toEqual(["queued", null, null]);
  });
});

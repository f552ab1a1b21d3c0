// Background work of one app instance, started once by the server entry (app/entry.server.tsx):
// allocation solves and, on PostgreSQL, the daily retention purge.
//
// A run is solved only by the instance that claimed it in the runs table (status queued → running in one
// conditional update). While solving, the instance writes a heartbeat; every instance sweeps now and then
// and takes back runs whose heartbeat is older than the stale limit (queued again, or failed with the reason
// after maxAttempts claims). The owner's writes (progress, result, failure) are guarded by its claim, so a
// run that was taken back is never overwritten by the instance that lost it.
//
// PostgreSQL: new runs travel as pg-boss jobs (app/jobs/queue.server.ts), any instance may take one; the
// retention purge is a pg-boss schedule (one run a day for the whole cluster).
// SQLite: the runs table is the queue and this process takes runs from it, oldest first.
import crypto from "node:crypto";
import os from "node:os";
import { isMainThread } from "node:worker_threads";
import { jobs } from "~/config.server";
import { todayIn } from "~/dates";
import { type Db, db } from "~/db.server";
import type { ProblemSnapshot } from "~/models/allocation-problem.server";
import {
  claimRun,
  heartbeat,
  markDone,
  markFailed,
  queuedRunIds,
  recoverStaleRuns,
  releaseRun,
  type StaleRecovery,
  writeProgress,
} from "~/models/allocation-runs.server";
import {
  ALLOCATION_QUEUE,
  boss,
  enqueueAllocation,
  onLocalEnqueue,
  RETENTION_QUEUE,
  stopBoss,
  usesPgBoss,
} from "./queue.server";
import { purgeExpiredAssessments } from "./retention.server";
import { type SolveFn, solveInWorker } from "./solve.server";

export interface RunnerOptions {
  instanceId: string;
  heartbeatMs: number;
  staleMs: number;
  maxAttempts: number;
  solve: SolveFn;
  k?: Db;
}

/** solved / failed: this instance wrote the outcome; not-queued: someone else has (or had) the run;
 * lost: the run was taken back while solving, nothing written; released: given back on shutdown. */
export type RunOutcome = "solved" | "failed" | "not-queued" | "lost" | "released";

export class AllocationRunner {
  private current: { abort: AbortController; release: boolean } | null = null;
  private busy: Promise<RunOutcome> | null = null;
  private stopping = false;
  private draining: Promise<void> | null = null;

  constructor(readonly o: RunnerOptions) {}

  private get k(): Db {
    return this.o.k ?? db();
  }

  /** Claims run `id` and solves it. One run at a time per runner. */
  process(id: number): Promise<RunOutcome> {
    if (this.stopping || this.busy) return Promise.resolve("not-queued");
    const busy = this.claimAndSolve(id).finally(() => {
      this.busy = null;
      this.current = null;
    });
    this.busy = busy;
    return busy;
  }

  private async claimAndSolve(id: number): Promise<RunOutcome> {
    const snapshot = await claimRun(id, this.o.instanceId, this.k);
    if (!snapshot) return "not-queued";
    if (this.stopping) return (await releaseRun(id, this.o.instanceId, this.k)) ? "released" : "lost";
    const cur = { abort: new AbortController(), release: false };
    this.current = cur;
    return this.solveClaimed(id, snapshot, cur);
  }

  /** Takes queued runs from the table, oldest first, until none is left (SQLite). One drain at a time. */
  drain(): Promise<void> {
    this.draining ??= (async () => {
      try {
        for (;;) {
          const ids = await queuedRunIds(this.k, 0, 10);
          if (ids.length === 0 || this.stopping) return;
          for (const id of ids) if (!this.stopping) await this.process(id);
        }
      } finally {
        this.draining = null;
      }
    })();
    return this.draining;
  }

  sweep(): Promise<StaleRecovery> {
    return recoverStaleRuns({ staleMs: this.o.staleMs, maxAttempts: this.o.maxAttempts }, this.k);
  }

  /** Shutting down: stops the solve in progress and gives its run back to the queue. */
  async stop(): Promise<void> {
    this.stopping = true;
    if (this.current) {
      this.current.release = true;
      this.current.abort.abort();
    }
    await this.busy?.catch(() => undefined);
  }

  private async solveClaimed(
    id: number,
    snapshot: ProblemSnapshot,
    cur: { abort: AbortController; release: boolean },
  ): Promise<RunOutcome> {
    const { instanceId } = this.o;
    const k = this.k;
    let lost = false;
    const beat = setInterval(() => {
      heartbeat(id, instanceId, k).then(
        (mine) => {
          if (!mine) {
            lost = true;
            cur.abort.abort();
          }
        },
        () => undefined, // a database hiccup: the next beat tries again; the stale limit allows several misses
      );
    }, this.o.heartbeatMs);
    beat.unref();
    try {
      const plan = await this.o.solve(
        snapshot.problem,
        (phase, fraction) => void writeProgress(id, instanceId, phase, fraction, k).catch(() => undefined),
        cur.abort.signal,
      );
      return (await markDone(id, instanceId, plan, k)) ? "solved" : "lost";
    } catch (e) {
      if (cur.release) return (await releaseRun(id, instanceId, k)) ? "released" : "lost";
      if (lost) return "lost";
      return (await markFailed(id, instanceId, e instanceof Error ? e.message : String(e), k)) ? "failed" : "lost";
    } finally {
      clearInterval(beat);
    }
  }
}

export function newInstanceId(): string {
  return `${os.hostname()}:${process.pid}:${crypto.randomBytes(3).toString("hex")}`;
}

interface BackgroundState {
  started: boolean;
  runner: AllocationRunner | null;
}
const g = globalThis as unknown as { __limberlyBackground?: BackgroundState };
if (!g.__limberlyBackground) g.__limberlyBackground = { started: false, runner: null };
const state: BackgroundState = g.__limberlyBackground;

/** Starts this instance's background work once (a no-op on later calls and inside worker threads). */
export function startBackgroundWork(): void {
  if (state.started || !isMainThread) return;
  state.started = true;
  const runner = new AllocationRunner({
    instanceId: newInstanceId(),
    heartbeatMs: jobs.heartbeatMs,
    staleMs: jobs.staleMs,
    maxAttempts: jobs.maxAttempts,
    solve: solveInWorker,
  });
  state.runner = runner;
  const pg = usesPgBoss();
  const log = (what: string) => (e: unknown) => console.error(`background jobs: ${what}:`, e);

  // PostgreSQL: this instance's pg-boss workers, registered once (retried by the sweep if the database was
  // not reachable at start-up).
  let working: Promise<void> | null = null;
  const ensureWorking = () => {
    working ??= boss()
      .then(async (b) => {
        await b.work<{ runId: number }>(
          ALLOCATION_QUEUE,
          { batchSize: 1, pollingIntervalSeconds: 1 },
          async ([job]) => {
            await runner.process(Number(job.data.runId));
          },
        );
        await b.work(RETENTION_QUEUE, { batchSize: 1, pollingIntervalSeconds: 10 }, async () => {
          const s = await purgeExpiredAssessments(todayIn("UTC"));
          console.log(`retention purge (cut-off ${s.cutoff}): ${s.assessmentSessions} assessment sessions deleted`);
        });
        await b.schedule(RETENTION_QUEUE, jobs.retentionCron, {}, { tz: "UTC" });
      })
      .catch((e) => {
        working = null;
        throw e;
      });
    return working;
  };

  const tick = async () => {
    const recovered = await runner.sweep();
    for (const id of recovered.failed) console.error(`allocation run ${id}: failed, its solver stopped answering`);
    if (pg) {
      await ensureWorking();
      // Requeued runs, and queued runs whose job may have been lost (singleton key: no duplicates waiting).
      const ids = new Set([...recovered.requeued, ...(await queuedRunIds(db(), 2 * jobs.heartbeatMs, 50))]);
      for (const id of ids) await enqueueAllocation(id);
    } else void runner.drain().catch(log("drain"));
  };
  let ticking = false;
  const timer = setInterval(
    () => {
      if (ticking) return;
      ticking = true;
      tick()
        .catch(log("sweep"))
        .finally(() => {
          ticking = false;
        });
    },
    Math.max(1_000, jobs.heartbeatMs),
  );
  timer.unref();

  if (pg) ensureWorking().catch(log("start"));
  else {
    onLocalEnqueue(() => void runner.drain().catch(log("drain")));
    void runner.drain().catch(log("drain"));
  }

  const shutdown = () => {
    clearInterval(timer);
    onLocalEnqueue(null);
    void runner
      .stop()
      .then(async () => {
        if (!pg) return;
        for (const id of await queuedRunIds(db(), 0, 50)) await enqueueAllocation(id);
        await stopBoss();
      })
      .catch(log("shutdown"));
  };
  process.once("SIGTERM", shutdown);
  process.once("SIGINT", shutdown);
}

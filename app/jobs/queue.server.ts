// The job queue's front door: how a new allocation run reaches a runner. Infrastructure like db.server.ts —
// it imports no model, so models may call it (startRun) and the runners (app/jobs/runner.server.ts) may
// import the models.
//
// PostgreSQL: pg-boss (tables in the `pgboss` schema of the same database). A job names a run id; any app
// instance's worker may fetch it (pg-boss hands each job to one fetcher), and the run itself is then claimed
// in the runs table with one conditional update, so a job delivered twice never solves a run twice.
// SQLite (one machine): the runs table is the queue; enqueue only wakes this process's runner.
import PgBoss from "pg-boss";
import { knexConfig } from "../../knexfile";

export const ALLOCATION_QUEUE = "allocation-solve";
export const RETENTION_QUEUE = "retention-purge";

interface QueueState {
  boss: Promise<PgBoss> | null;
  wakeLocal: (() => void) | null;
}
const g = globalThis as unknown as { __limberlyQueue?: QueueState };
if (!g.__limberlyQueue) g.__limberlyQueue = { boss: null, wakeLocal: null };
const state: QueueState = g.__limberlyQueue;

export function usesPgBoss(): boolean {
  return knexConfig().client === "pg";
}

/** This process's pg-boss, started once (creates or upgrades its schema; maintenance is cluster-safe). */
export function boss(): Promise<PgBoss> {
  if (!state.boss) {
    const { connectionString } = knexConfig().connection as { connectionString: string };
    const b = new PgBoss({ connectionString, max: 4, application_name: "limberly-jobs" });
    b.on("error", (e) => console.error("job queue:", e));
    state.boss = b
      .start()
      .then(async () => {
        // Expiry is only the last resort (the runs' own heartbeats decide much sooner); retries cover a
        // runner that threw before it could record the outcome.
        await b.createQueue(ALLOCATION_QUEUE, {
          name: ALLOCATION_QUEUE,
          policy: "short",
          retryLimit: 3,
          retryDelay: 5,
          expireInSeconds: 15 * 60,
        });
        await b.createQueue(RETENTION_QUEUE, {
          name: RETENTION_QUEUE,
          policy: "short",
          retryLimit: 2,
          retryDelay: 60,
          expireInSeconds: 60 * 60,
        });
        return b;
      })
      .catch((e) => {
        state.boss = null;
        throw e;
      });
  }
  return state.boss;
}

export async function stopBoss(): Promise<void> {
  const b = state.boss;
  state.boss = null;
  if (b) await (await b.catch(() => null))?.stop({ graceful: false, close: true, wait: true });
}

/** The in-process runner registers here (SQLite). */
export function onLocalEnqueue(wake: (() => void) | null): void {
  state.wakeLocal = wake;
}

/** Hands a committed, queued run to the runners. One job per queued run (the singleton key). */
export async function enqueueAllocation(runId: number): Promise<void> {
  if (usesPgBoss()) {
    await (await boss()).send(ALLOCATION_QUEUE, { runId }, { singletonKey: `run-${runId}` });
    return;
  }
  state.wakeLocal?.();
}

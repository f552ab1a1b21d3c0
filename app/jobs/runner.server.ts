// Background jobs: allocation solves run one at a time in a worker_threads Worker, so the server keeps
// answering (progress polling included) while javascript-lp-solver works. Started lazily: the first request
// that touches allocation runs calls ensureJobsStarted(), which fails runs a stopped server left "running" and
// picks up queued ones.
//
// Where the worker code comes from (the choice, documented): the built server is ONE bundle
// (build/server/index.js) and no TypeScript is compiled at run time in production. app/jobs/allocation-worker.ts
// is imported below, so it is inside that bundle; the runner starts the Worker on the very file this code was
// loaded from (import.meta.url) and passes workerData.limberlyJob, which is the only thing that makes the
// worker module's code run. Under Vite in development the sources are .ts files, so the runner starts
// allocation-worker.ts through tsx instead. If a Worker cannot be started at all, the solve runs in-process
// after yielding to the event loop (the result is the same; the solver is deterministic), and the run's phase
// says so.
import path from "node:path";
import { fileURLToPath } from "node:url";
import { Worker } from "node:worker_threads";
import { type AllocationPlan, solveAllocation } from "~/compute/allocation";
import { markDone, markFailed, markRunning, recoverRuns, writeProgress } from "~/models/allocation-runs.server";
import { ALLOCATION_JOB, type WorkerMessage } from "./allocation-worker";

export const SOLVE_TIME_LIMIT_MS = 30_000;

interface JobState {
  started: boolean;
  queue: number[];
  busy: boolean;
  idleWaiters: (() => void)[];
}
const g = globalThis as unknown as { __limberlyJobs?: JobState };
g.__limberlyJobs ??= { started: false, queue: [], busy: false, idleWaiters: [] };
const state: JobState = g.__limberlyJobs;

export async function ensureJobsStarted(): Promise<void> {
  if (state.started) return;
  state.started = true;
  try {
    for (const id of await recoverRuns()) enqueueRun(id);
  } catch (e) {
    state.started = false;
    throw e;
  }
}

export function enqueueRun(id: number): void {
  if (!state.queue.includes(id)) state.queue.push(id);
  setImmediate(pump);
}

async function pump(): Promise<void> {
  if (state.busy) return;
  const id = state.queue.shift();
  if (id === undefined) {
    for (const w of state.idleWaiters.splice(0)) w();
    return;
  }
  state.busy = true;
  try {
    await runOne(id);
  } catch (e) {
    await markFailed(id, e instanceof Error ? e.message : String(e)).catch(() => undefined);
  } finally {
    state.busy = false;
    setImmediate(pump);
  }
}

async function runOne(id: number): Promise<void> {
  const snapshot = await markRunning(id);
  if (!snapshot) return;
  let plan: AllocationPlan;
  try {
    plan = await solveInWorker(snapshot.problem, (phase, fraction) => {
      void writeProgress(id, phase, fraction).catch(() => undefined);
    });
  } catch (e) {
    if (!(e instanceof WorkerUnavailable)) throw e;
    await writeProgress(id, "solving in-process", 0);
    await new Promise((r) => setImmediate(r));
    plan = await solveAllocation(snapshot.problem, {
      timeLimitMs: SOLVE_TIME_LIMIT_MS,
      clock: () => performance.now(),
    });
  }
  await markDone(id, plan);
}

class WorkerUnavailable extends Error {}

function workerTarget(): { file: string; execArgv?: string[] } {
  const here = fileURLToPath(import.meta.url);
  if (/\.(c|m)?js$/.test(here)) return { file: here };
  return { file: path.join(path.dirname(here), "allocation-worker.ts"), execArgv: ["--import", "tsx"] };
}

function solveInWorker(
  problem: unknown,
  onProgress: (phase: string, fraction: number) => void,
): Promise<AllocationPlan> {
  return new Promise((resolve, reject) => {
    let worker: Worker;
    try {
      const target = workerTarget();
      worker = new Worker(target.file, {
        workerData: { limberlyJob: ALLOCATION_JOB, problem, timeLimitMs: SOLVE_TIME_LIMIT_MS },
        execArgv: target.execArgv ?? [],
      });
    } catch (e) {
      reject(new WorkerUnavailable(e instanceof Error ? e.message : String(e)));
      return;
    }
    let settled = false;
    const finish = (fn: () => void) => {
      if (!settled) {
        settled = true;
        fn();
        void worker.terminate();
      }
    };
    // A hard stop in case the worker never answers: the time limit plus a generous margin for start-up.
    const guard = setTimeout(
      () => finish(() => reject(new Error("The solve did not finish in time and was stopped."))),
      SOLVE_TIME_LIMIT_MS + 60_000,
    );
    guard.unref();
    worker.on("message", (m: WorkerMessage) => {
      if (m.type === "progress") onProgress(m.phase, m.fraction);
      else if (m.type === "done") {
        clearTimeout(guard);
        finish(() => resolve(m.plan as AllocationPlan));
      } else if (m.type === "error") {
        clearTimeout(guard);
        finish(() => reject(new Error(`The solver failed: ${m.message}`)));
      }
    });
    worker.on("error", (e) => {
      clearTimeout(guard);
      finish(() => reject(new Error(`The solver thread failed: ${e.message}`)));
    });
    worker.on("exit", (code) => {
      clearTimeout(guard);
      finish(() => reject(new Error(`The solver thread ended early (exit code ${code}).`)));
    });
  });
}

/** For tests and scripts: resolves once the queue is empty. */
export function whenIdle(): Promise<void> {
  if (!state.busy && state.queue.length === 0) return Promise.resolve();
  return new Promise((r) => state.idleWaiters.push(r));
}

// One allocation solve off the main thread: a worker_threads Worker runs the pure solver, so the server keeps
// answering (progress polling and heartbeats included) while javascript-lp-solver works.
//
// Where the worker code comes from: see startWorker (app/jobs/allocation-worker.ts is imported below, so
// it is inside the built bundle). If a Worker cannot be started at all, the solve runs in-process after
// yielding to the event loop (the result is the same; the solver is deterministic), and the progress phase
// says so.
import type { Worker } from "node:worker_threads";
import { type AllocationPlan, type AllocationProblem, solveAllocation } from "~/compute/allocation";
import { ALLOCATION_JOB, type WorkerMessage } from "./allocation-worker";
import { startWorker } from "./worker-target.server";

export const SOLVE_TIME_LIMIT_MS = 30_000;

export type SolveFn = (
  problem: AllocationProblem,
  onProgress: (phase: string, fraction: number) => void,
  signal: AbortSignal,
) => Promise<AllocationPlan>;

/** Raised when a solve was stopped on purpose (the run is no longer ours, or the instance shuts down). */
export class SolveAborted extends Error {}

class WorkerUnavailable extends Error {}

export const solveInWorker: SolveFn = async (problem, onProgress, signal) => {
  try {
    return await solveOnThread(problem, onProgress, signal);
  } catch (e) {
    if (!(e instanceof WorkerUnavailable)) throw e;
    onProgress("solving in-process", 0);
    await new Promise((r) => setImmediate(r));
    if (signal.aborted) throw new SolveAborted("stopped");
    return solveAllocation(problem, { timeLimitMs: SOLVE_TIME_LIMIT_MS, clock: () => performance.now() });
  }
};

function solveOnThread(
  problem: AllocationProblem,
  onProgress: (phase: string, fraction: number) => void,
  signal: AbortSignal,
): Promise<AllocationPlan> {
  return new Promise((resolve, reject) => {
    if (signal.aborted) {
      reject(new SolveAborted("stopped"));
      return;
    }
    let worker: Worker;
    try {
      worker = startWorker(import.meta.url, "allocation-worker.ts", {
        workerData: { limberlyJob: ALLOCATION_JOB, problem, timeLimitMs: SOLVE_TIME_LIMIT_MS },
      });
    } catch (e) {
      reject(new WorkerUnavailable(e instanceof Error ? e.message : String(e)));
      return;
    }
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      clearTimeout(guard);
      signal.removeEventListener("abort", onAbort);
      fn();
      void worker.terminate();
    };
    const onAbort = () => finish(() => reject(new SolveAborted("stopped")));
    signal.addEventListener("abort", onAbort);
    // A hard stop in case the worker never answers: the time limit plus a generous margin for start-up.
    const guard = setTimeout(
      () => finish(() => reject(new Error("The solve did not finish in time and was stopped."))),
      SOLVE_TIME_LIMIT_MS + 60_000,
    );
    guard.unref();
    worker.on("message", (m: WorkerMessage) => {
      if (m.type === "progress") onProgress(m.phase, m.fraction);
      else if (m.type === "done") finish(() => resolve(m.plan as AllocationPlan));
      else if (m.type === "error") finish(() => reject(new Error(`The solver failed: ${m.message}`)));
    });
    worker.on("error", (e) => finish(() => reject(new Error(`The solver thread failed: ${e.message}`))));
    worker.on("exit", (code) => finish(() => reject(new Error(`The solver thread ended early (exit code ${code}).`))));
  });
}

// The worker-thread side of an allocation solve. This module is bundled into the built server
// (build/server/index.js) because the job runner imports it; the runner starts a worker_threads Worker on
// that same bundle file with `workerData.limberlyJob = "allocation-solve"`, and the check below makes this
// code run only there — on the main thread it does nothing. In development (Vite, sources in .ts) the
// runner starts this file directly through tsx instead. The solver is pure (app/compute/allocation.ts):
// the worker posts progress and the plan back; the main thread writes them to the run row.
import { isMainThread, parentPort, workerData } from "node:worker_threads";
import { type AllocationProblem, solveAllocation } from "~/compute/allocation";

export const ALLOCATION_JOB = "allocation-solve";

export type WorkerMessage =
  | { type: "progress"; phase: string; fraction: number }
  | { type: "done"; plan: unknown }
  | { type: "error"; message: string };

if (!isMainThread && parentPort && (workerData as { limberlyJob?: string } | null)?.limberlyJob === ALLOCATION_JOB) {
  const port = parentPort;
  const { problem, timeLimitMs } = workerData as { problem: AllocationProblem; timeLimitMs: number };
  let last = 0;
  solveAllocation(problem, {
    timeLimitMs,
    clock: () => performance.now(),
    onProgress: (p) => {
      const now = performance.now();
      if (now - last < 100 && p.fraction < 1) return;
      last = now;
      port.postMessage({ type: "progress", phase: p.phase, fraction: p.fraction } satisfies WorkerMessage);
    },
  }).then(
    (plan) => port.postMessage({ type: "done", plan } satisfies WorkerMessage),
    (e: unknown) =>
      port.postMessage({ type: "error", message: e instanceof Error ? e.message : String(e) } satisfies WorkerMessage),
  );
}

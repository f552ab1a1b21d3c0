// Protecting a new readiness publication off the request thread: the over-time check is one LP per hidden
// number and change (seconds for a table of 60 cells), so it runs in a worker_threads Worker and the
// server keeps answering meanwhile. Imports no model, so models may call it.
import type { OverTimeResult, StoredPublication, TableCounts } from "~/compute/disclosure-history";
import { DISCLOSURE_JOB, type DisclosureMessage } from "./disclosure-worker";
import { startWorker } from "./worker-target.server";

export function protectOverTimeOffThread(
  current: TableCounts,
  previous: StoredPublication | null,
): Promise<OverTimeResult> {
  return new Promise((resolve, reject) => {
    const worker = startWorker(import.meta.url, "disclosure-worker.ts", {
      workerData: { limberlyJob: DISCLOSURE_JOB, current, previous },
    });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      fn();
      void worker.terminate();
    };
    worker.on("message", (m: DisclosureMessage) =>
      finish(() =>
        m.type === "done" ? resolve(m.result) : reject(new Error(`Protecting the table failed: ${m.message}`)),
      ),
    );
    worker.on("error", (e: Error) => finish(() => reject(new Error(`The protection thread failed: ${e.message}`))));
    worker.on("exit", (code) => finish(() => reject(new Error(`The protection thread ended early (exit ${code}).`))));
  });
}

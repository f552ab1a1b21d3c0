// The worker-thread side of protecting a new readiness publication (see app/jobs/disclosure.server.ts, and
// worker-target.server.ts for how this module reaches the worker). It runs only where workerData names its
// job; on the main thread, and in other workers, it does nothing.
import { isMainThread, parentPort, workerData } from "node:worker_threads";
import {
  type OverTimeResult,
  protectOverTime,
  type StoredPublication,
  type TableCounts,
} from "~/compute/disclosure-history";

export const DISCLOSURE_JOB = "readiness-protect";

export type DisclosureMessage = { type: "done"; result: OverTimeResult } | { type: "error"; message: string };

if (!isMainThread && parentPort && (workerData as { limberlyJob?: string } | null)?.limberlyJob === DISCLOSURE_JOB) {
  const { current, previous } = workerData as { current: TableCounts; previous: StoredPublication | null };
  let message: DisclosureMessage;
  try {
    message = { type: "done", result: protectOverTime(current, previous) };
  } catch (e) {
    message = { type: "error", message: e instanceof Error ? e.message : String(e) };
  }
  parentPort.postMessage(message);
}

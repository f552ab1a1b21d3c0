// The worker-thread side of reading an uploaded roster file (see app/jobs/upload-read.server.ts, and
// workerTarget for how this module reaches the worker). It runs only where workerData names its job; on the
// main thread, and in other workers, it does nothing.
import { isMainThread, parentPort, workerData } from "node:worker_threads";
import { UserError } from "~/errors";
import { readRosterFile } from "~/models/roster-file.server";

export const UPLOAD_READ_JOB = "roster-file-read";

export type UploadReadMessage =
  | { type: "done"; table: { headers: string[]; rows: string[][] } }
  | { type: "refused"; message: string; status: number }
  | { type: "error"; message: string };

if (!isMainThread && parentPort && (workerData as { limberlyJob?: string } | null)?.limberlyJob === UPLOAD_READ_JOB) {
  const port = parentPort;
  const { filename, bytes } = workerData as { filename: string; bytes: Uint8Array };
  readRosterFile(filename, bytes).then(
    (table) => port.postMessage({ type: "done", table } satisfies UploadReadMessage),
    (e: unknown) =>
      port.postMessage(
        (e instanceof UserError
          ? { type: "refused", message: e.message, status: e.status }
          : { type: "error", message: e instanceof Error ? e.message : String(e) }) satisfies UploadReadMessage,
      ),
  );
}

// Reading an uploaded roster file off the request thread: a worker_threads Worker with a heap limit and a
// time limit parses it (app/jobs/upload-read-worker.ts), so a hostile or huge file costs that worker, never
// the server's responsiveness; the worker is stopped at the limit and the upload refused with a message
// naming it. At most MAX_READS_AT_ONCE files are read at once; a deployment holds one organisation, so this
// is the organisation's cap on this instance, and a further upload is refused with 429 until one finishes.
import { UserError } from "~/errors";
import type { RosterTable } from "~/models/roster-file.server";
import { UPLOAD_READ_JOB, type UploadReadMessage } from "./upload-read-worker";
import { startWorker } from "./worker-target.server";

export const READ_TIME_LIMIT_MS = 30_000;
/** The worker's V8 heap (old generation): a roster of the most rows an import takes reads within 256 MB. */
export const READ_HEAP_LIMIT_MB = 384;
export const MAX_READS_AT_ONCE = 2;
const RETRY_AFTER_S = 60;

const NOTHING_SAVED = "Nothing was saved.";
let reading = 0;

/** Runs `read` in one of the organisation's reading slots, or refuses (429) when all are taken. */
export async function withUploadReadSlot<T>(read: () => Promise<T>): Promise<T> {
  if (reading >= MAX_READS_AT_ONCE)
    throw new UserError(
      `${MAX_READS_AT_ONCE} files are already being read for your organisation, the most at once; try again in a minute. ${NOTHING_SAVED}`,
      { status: 429, retryAfterSeconds: RETRY_AFTER_S },
    );
  reading++;
  try {
    return await read();
  } finally {
    reading--;
  }
}

/** Parses the file in a worker within the limits; refusals arrive as UserErrors. */
export function readRosterFileOffThread(
  filename: string,
  bytes: Uint8Array,
  limits: { timeLimitMs?: number; heapLimitMb?: number } = {},
): Promise<RosterTable> {
  const timeLimitMs = limits.timeLimitMs ?? READ_TIME_LIMIT_MS;
  const heapLimitMb = limits.heapLimitMb ?? READ_HEAP_LIMIT_MB;
  return new Promise((resolve, reject) => {
    const worker = startWorker(import.meta.url, "upload-read-worker.ts", {
      workerData: { limberlyJob: UPLOAD_READ_JOB, filename, bytes },
      resourceLimits: { maxOldGenerationSizeMb: heapLimitMb, maxYoungGenerationSizeMb: 32 },
    });
    let settled = false;
    const finish = (fn: () => void) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      fn();
      void worker.terminate();
    };
    const timer = setTimeout(
      () =>
        finish(() =>
          reject(
            new UserError(
              `Reading the file took longer than ${timeLimitMs / 1000} s, the most one upload may take; split it or save it as CSV. ${NOTHING_SAVED}`,
              { status: 413 },
            ),
          ),
        ),
      timeLimitMs,
    );
    worker.on("message", (m: UploadReadMessage) => {
      if (m.type === "done") finish(() => resolve(m.table));
      else if (m.type === "refused") finish(() => reject(new UserError(m.message, { status: m.status })));
      else finish(() => reject(new Error(`Reading the upload failed: ${m.message}`)));
    });
    worker.on("error", (e: Error & { code?: string }) =>
      finish(() =>
        reject(
          e.code === "ERR_WORKER_OUT_OF_MEMORY"
            ? new UserError(
                `Reading the file needed more than ${heapLimitMb} MB of memory, the most one upload may use; split it or save it as CSV. ${NOTHING_SAVED}`,
                { status: 413 },
              )
            : new Error(`The upload-reading thread failed: ${e.message}`),
        ),
      ),
    );
    worker.on("exit", (code) =>
      finish(() => reject(new Error(`The upload-reading thread ended early (exit ${code}).`))),
    );
  });
}

import path from "node:path";
import { fileURLToPath } from "node:url";

// Where a worker_threads Worker starts. The built server is ONE bundle (build/server/index.js) and no
// TypeScript is compiled at run time in production: the worker modules are imported by their launchers, so
// they are inside that bundle, and a Worker starts on the very file the launcher was loaded from with
// workerData.limberlyJob naming the job (each worker module runs only for its own job name). Under Vite in
// development, and under tsx in tests and benches, the sources are .ts files, so the Worker starts the
// worker module itself through tsx instead.
export function workerTarget(launcherUrl: string, workerFile: string): { file: string; execArgv: string[] } {
  const here = fileURLToPath(launcherUrl);
  if (/\.(c|m)?js$/.test(here)) return { file: here, execArgv: [] };
  return { file: path.join(path.dirname(here), workerFile), execArgv: ["--import", "tsx"] };
}

import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import path from "node:path";
import { fileURLToPath, pathToFileURL } from "node:url";
import { Worker, type WorkerOptions } from "node:worker_threads";

/**
 * Starts a worker_threads Worker for a job. The built server is ONE bundle (build/server/index.js) and no
 * TypeScript is compiled at run time in production: the worker modules are imported by their launchers, so
 * they are inside that bundle, and the Worker starts on the very file the launcher was loaded from, with
 * workerData.limberlyJob naming the job (each worker module runs only for its own job name). From the .ts
 * sources (Vite in development, tsx in tests and benches) the Worker loads `workerFile`, beside the launcher,
 * through tsx's loader API (Node 20 workers do not take `--import tsx` in execArgv).
 */
export function startWorker(launcherUrl: string, workerFile: string, options: WorkerOptions): Worker {
  const here = fileURLToPath(launcherUrl);
  if (/\.(c|m)?js$/.test(here)) return new Worker(here, options);
  const file = pathToFileURL(path.join(path.dirname(here), workerFile)).href;
  const api = pathToFileURL(tsxEsmApi(launcherUrl)).href;
  const boot = `import(${JSON.stringify(api)}).then((m) => m.tsImport(${JSON.stringify(file)}, ${JSON.stringify(file)}))`;
  return new Worker(`${boot}.catch((e) => { console.error(e); process.exit(1); });`, { ...options, eval: true });
}

/** The ES-module build of tsx's loader API (its CommonJS build cannot load the ES one from a worker). */
function tsxEsmApi(fromUrl: string): string {
  const pkgFile = createRequire(fromUrl).resolve("tsx/package.json");
  const pkg = JSON.parse(readFileSync(pkgFile, "utf8")) as {
    exports: Record<string, { import: { default: string } }>;
  };
  return path.join(path.dirname(pkgFile), pkg.exports["./esm/api"].import.default);
}

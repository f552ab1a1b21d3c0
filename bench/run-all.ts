// `npm run bench`: runs every benchmark in this folder, one child process each, and prints their tables.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";

const dir = path.dirname(new URL(import.meta.url).pathname);
const only = process.argv.slice(2);
const files = fs
  .readdirSync(dir)
  .filter((f) => f.endsWith(".ts") && f !== "run-all.ts" && !f.startsWith("_"))
  .filter((f) => only.length === 0 || only.some((o) => f.includes(o)))
  .sort();
const summary: { bench: string; exit: number; seconds: string }[] = [];
for (const f of files) {
  console.log(`\n━━ bench/${f} ━━`);
  const t0 = Date.now();
  const r = spawnSync(process.execPath, ["--import", "tsx", path.join(dir, f)], { stdio: "inherit" });
  summary.push({ bench: f, exit: r.status ?? 1, seconds: ((Date.now() - t0) / 1000).toFixed(1) });
}
console.log("\n━━ summary ━━");
console.table(summary);
process.exit(summary.every((s) => s.exit === 0) ? 0 : 1);

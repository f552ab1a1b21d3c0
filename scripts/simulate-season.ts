// `npm run simulate:season`: the season of tests/integration/programme-season.test.ts on a throwaway SQLite
// database and a stack of its own; prints the checks as a table and exits 1 when one fails.
import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { runSeasonOnce } from "./season/run";

const dir = fs.mkdtempSync(path.join(os.tmpdir(), "limberly-season-"));
try {
  const r = await runSeasonOnce({ dir, databaseUrl: path.join(dir, "season.sqlite"), say: (s) => console.error(s) });
  console.log(r.table);
  process.exitCode = r.checks.every((c) => c.ok) ? 0 : 1;
} finally {
  // LIMBERLY_SEASON_KEEP=1 keeps the database and the outbox to look at afterwards.
  if (process.env.LIMBERLY_SEASON_KEEP) console.error(`kept: ${dir}`);
  else fs.rmSync(dir, { recursive: true, force: true });
}

// One whole season: its stack, the simulation and the checks, timed. Shared by the test, the script and the bench.

import { SEASON } from "./parameters";
import { formatReport, type SeasonCheck, seasonChecks } from "./report";
import { runSeason, type SeasonLog, seasonDb } from "./simulate";
import { startSeasonStack } from "./stack";

export interface SeasonRun {
  log: SeasonLog;
  checks: SeasonCheck[];
  table: string;
  /** the simulation alone (stack start and seeding excluded) */
  seconds: number;
}

export async function runSeasonOnce(o: {
  dir: string;
  databaseUrl: string;
  say?: (s: string) => void;
}): Promise<SeasonRun> {
  const stack = await startSeasonStack({
    dir: o.dir,
    databaseUrl: o.databaseUrl,
    start: `${SEASON.startMonday}T06:00:00.000Z`,
  });
  try {
    const t0 = performance.now();
    const log = await runSeason(stack, o.say);
    const seconds = (performance.now() - t0) / 1000;
    const k = seasonDb(o.databaseUrl);
    try {
      const checks = await seasonChecks(k, stack.outboxDir, log);
      return { log, checks, seconds, table: formatReport(checks, seconds, log.phases) };
    } finally {
      await k.destroy();
    }
  } finally {
    await stack.stop();
  }
}
